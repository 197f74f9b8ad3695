package ui

import (
	"sort"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"teeter/models"
	"teeter/sim"
)

// shovePanel edits the list of shoves given at set times of every run, and
// makes random shove trains.
type shovePanel struct {
	w     *Window
	list  []sim.Shove
	links []string
	rows  *fyne.Container
}

func newShovePanel(w *Window) *shovePanel {
	return &shovePanel{w: w, rows: container.NewVBox()}
}

func (p *shovePanel) setRobot(r *models.Robot) {
	p.links = nil
	for _, l := range r.Links {
		p.links = append(p.links, l.Name)
	}
	p.list = nil
	p.redraw()
}

func (p *shovePanel) object() fyne.CanvasObject {
	key := newNumberField("N*s", 0, 100, func(v float64) { p.w.keyShove = v })
	key.show(p.w.keyShove)

	count := newNumberField("", 1, 100, nil)
	count.show(5)
	size := newNumberField("N*s", 0, 100, nil)
	size.show(2)
	gap := newNumberField("s", 0.1, 600, nil)
	gap.show(2)
	seed := newNumberField("", 0, 1e9, nil)
	seed.show(1)
	train := widget.NewButton("Make random train", func() {
		vals := make([]float64, 4)
		for i, f := range []*numberField{count, size, gap, seed} {
			i := i
			f.apply = func(v float64) { vals[i] = v }
			if !f.submit(f.Entry.Text) {
				return
			}
		}
		p.list = sim.FirstRandomShoves(int(vals[0]), uint64(vals[3]), trainStart, vals[2], trainSmallest*vals[1], vals[1], nil)
		p.changed()
	})
	add := widget.NewButton("Add shove", func() {
		at := 1.0
		if n := len(p.list); n > 0 {
			at = p.list[n-1].At + 1
		}
		p.list = append(p.list, sim.Shove{At: at, Impulse: models.Vec2{X: 1}})
		p.changed()
	})
	clearAll := widget.NewButton("Clear", func() { p.list = nil; p.changed() })
	form := widget.NewForm(
		widget.NewFormItem("Keyboard shove (← →)", key.object()),
		widget.NewFormItem("Shoves in train", count.object()),
		widget.NewFormItem("Largest impulse", size.object()),
		widget.NewFormItem("Mean interval", gap.object()),
		widget.NewFormItem("Seed", seed.object()),
	)
	head := container.NewVBox(form, container.NewHBox(train, add, clearAll),
		wrapped("Scheduled shoves (time, link, impulse x and y); they come in every run after a reset:"))
	return container.NewBorder(head, nil, nil, nil, container.NewVScroll(p.rows))
}

// A random train starts once the robot has settled on its pads, and its
// shoves range from trainSmallest of the largest impulse to the largest.
const (
	trainStart    = 1.0 // s
	trainSmallest = 0.3
)

func (p *shovePanel) changed() {
	sort.SliceStable(p.list, func(i, j int) bool { return p.list[i].At < p.list[j].At })
	p.w.after(p.w.run.Schedule(p.list))
	p.redraw()
}

func (p *shovePanel) redraw() {
	p.rows.Objects = nil
	for i := range p.list {
		i := i
		s := &p.list[i]
		at := newNumberField("s", 0, 1e6, func(v float64) { s.At = v; p.changed() })
		at.show(s.At)
		jx := newNumberField("N*s", -1000, 1000, func(v float64) { s.Impulse.X = v; p.changed() })
		jx.show(s.Impulse.X)
		jy := newNumberField("N*s", -1000, 1000, func(v float64) { s.Impulse.Y = v; p.changed() })
		jy.show(s.Impulse.Y)
		opts := append([]string{"(watched link)"}, p.links...)
		link := widget.NewSelect(opts, func(v string) {
			if v == "(watched link)" {
				v = ""
			}
			if v != s.Link {
				s.Link = v
				p.changed()
			}
		})
		if s.Link == "" {
			link.SetSelected(opts[0])
		} else {
			link.SetSelected(s.Link)
		}
		del := widget.NewButton("Remove", func() {
			p.list = append(p.list[:i], p.list[i+1:]...)
			p.changed()
		})
		p.rows.Add(container.NewGridWithColumns(5, at.object(), link, jx.object(), jy.object(), del))
	}
	if len(p.list) == 0 {
		p.rows.Add(widget.NewLabel("None."))
	}
	p.rows.Refresh()
}
