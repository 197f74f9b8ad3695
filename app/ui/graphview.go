package ui

import (
	"image/color"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
)

// blockInputs lists, for each block of a spec, the blocks wired into it.
func blockInputs(spec *control.Spec) [][]int {
	byName := map[string]int{}
	for i, b := range spec.Blocks {
		byName[b.Name] = i
	}
	inputs := make([][]int, len(spec.Blocks))
	for i, b := range spec.Blocks {
		for _, p := range b.Inputs {
			name, _, _ := strings.Cut(p.Source, ".")
			if j, ok := byName[name]; ok {
				inputs[i] = append(inputs[i], j)
			}
		}
	}
	return inputs
}

// blockBox is one block drawn as a rounded box with its name and kind.
type blockBox struct {
	widget.BaseWidget
	rect     *canvas.Rectangle
	name     *canvas.Text
	kind     *canvas.Text
	onTapped func()
}

func newBlockBox(name, kind string, onTapped func()) *blockBox {
	b := &blockBox{onTapped: onTapped}
	b.rect = canvas.NewRectangle(pal.BlockFill)
	b.rect.StrokeColor = pal.BlockEdge
	b.rect.StrokeWidth = 1.5
	b.rect.CornerRadius = 8
	b.name = canvas.NewText(name, pal.Outline)
	b.name.TextStyle.Bold = true
	b.name.Alignment = fyne.TextAlignCenter
	b.kind = canvas.NewText(kind, pal.BlockEdge)
	b.kind.TextSize = theme.TextSize() * 0.85
	b.kind.Alignment = fyne.TextAlignCenter
	b.ExtendBaseWidget(b)
	return b
}

func (b *blockBox) CreateRenderer() fyne.WidgetRenderer {
	return &blockRenderer{b}
}

func (b *blockBox) Tapped(*fyne.PointEvent) {
	if b.onTapped != nil {
		b.onTapped()
	}
}

func (b *blockBox) setSelected(on bool) {
	if on {
		b.rect.StrokeColor, b.rect.StrokeWidth = pal.BlockSelected, 3
	} else {
		b.rect.StrokeColor, b.rect.StrokeWidth = pal.BlockEdge, 1.5
	}
	b.rect.Refresh()
}

type blockRenderer struct{ b *blockBox }

func (r *blockRenderer) Layout(size fyne.Size) {
	r.b.rect.Resize(size)
	h := r.b.name.MinSize().Height
	r.b.name.Move(fyne.NewPos(0, size.Height/2-h))
	r.b.name.Resize(fyne.NewSize(size.Width, h))
	r.b.kind.Move(fyne.NewPos(0, size.Height/2))
	r.b.kind.Resize(fyne.NewSize(size.Width, r.b.kind.MinSize().Height))
}
func (r *blockRenderer) MinSize() fyne.Size { return fyne.NewSize(blockW, blockH) }
func (r *blockRenderer) Refresh()           { r.b.rect.Refresh(); r.b.name.Refresh(); r.b.kind.Refresh() }
func (r *blockRenderer) Objects() []fyne.CanvasObject {
	return []fyne.CanvasObject{r.b.rect, r.b.name, r.b.kind}
}
func (r *blockRenderer) Destroy() {}

const (
	blockW, blockH    = 120, 46
	columnGap, rowGap = 50, 18
)

// graphView draws the controller graph left to right by dependency; a tap
// on a block selects it.
type graphView struct {
	boxes    []*blockBox
	content  *fyne.Container
	selected int
	onSelect func(block string)
}

func newGraphView(onSelect func(string)) *graphView {
	return &graphView{content: container.NewWithoutLayout(), selected: -1, onSelect: onSelect}
}

// setSpec lays out and draws the blocks of spec (nil: none).
func (g *graphView) setSpec(spec *control.Spec) {
	g.content.Objects = nil
	g.boxes = nil
	g.selected = -1
	if spec == nil || len(spec.Blocks) == 0 {
		g.content.Add(widget.NewLabel("This robot has no controller."))
		g.content.Refresh()
		return
	}
	inputs := blockInputs(spec)
	col, row := layerNodes(inputs)
	pos := make([]fyne.Position, len(spec.Blocks))
	var width, height float32
	for i := range spec.Blocks {
		pos[i] = fyne.NewPos(float32(10+col[i]*(blockW+columnGap)), float32(10+row[i]*(blockH+rowGap)))
		width = max(width, pos[i].X+blockW+10)
		height = max(height, pos[i].Y+blockH+10)
	}
	// Wires first, so boxes cover their ends: out of the right side of the
	// source, across, and into the left side of the destination.
	for i, ins := range inputs {
		for k, j := range ins {
			ax, ay := pos[j].X+blockW, pos[j].Y+blockH/2
			bx := pos[i].X
			by := pos[i].Y + blockH*float32(k+1)/float32(len(ins)+1)
			mid := ax + columnGap/2
			if bx <= ax { // a feedback wire runs back under the boxes
				mid = ax + columnGap/3
			}
			for _, seg := range [][4]float32{{ax, ay, mid, ay}, {mid, ay, mid, by}, {mid, by, bx, by}} {
				l := canvas.NewLine(pal.Wire)
				l.StrokeWidth = 1.5
				l.Position1, l.Position2 = fyne.NewPos(seg[0], seg[1]), fyne.NewPos(seg[2], seg[3])
				g.content.Add(l)
			}
			dot := canvas.NewCircle(pal.Wire)
			dot.Move(fyne.NewPos(bx-3, by-3))
			dot.Resize(fyne.NewSize(6, 6))
			g.content.Add(dot)
		}
	}
	for i, b := range spec.Blocks {
		i := i
		box := newBlockBox(b.Name, b.Kind, func() { g.selectBlock(i) })
		box.Move(pos[i])
		box.Resize(fyne.NewSize(blockW, blockH))
		g.boxes = append(g.boxes, box)
		g.content.Add(box)
	}
	// A spacer gives the scroll container the graph's size.
	spacer := canvas.NewRectangle(color.Transparent)
	spacer.Resize(fyne.NewSize(width, height))
	spacer.Move(fyne.NewPos(0, 0))
	g.content.Objects = append([]fyne.CanvasObject{spacer}, g.content.Objects...)
	g.content.Refresh()
}

func (g *graphView) selectBlock(i int) {
	if g.selected >= 0 && g.selected < len(g.boxes) {
		g.boxes[g.selected].setSelected(false)
	}
	g.selected = i
	g.boxes[i].setSelected(true)
	if g.onSelect != nil {
		g.onSelect(g.boxes[i].name.Text)
	}
}

// minSize is the size the laid-out graph needs.
func (g *graphView) minSize() fyne.Size {
	if len(g.content.Objects) == 0 {
		return fyne.NewSize(0, 0)
	}
	return g.content.Objects[0].Size()
}
