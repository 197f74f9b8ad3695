package ui

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"image"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/margin"
	"teeter/sim/study/metric"
	"teeter/sim/study/plot"
	"teeter/sim/study/sweep"
	"teeter/sim/study/tune"
)

// The studies tab runs the studies of sim/study/... on the window's robot and
// gains as they are when a study starts: each in its own goroutine with a
// progress bar and a cancel button, its result shown in the tab and saved
// in the studies directory beside the autosave.

// studyJob is the running part every study shares.
type studyJob struct {
	startBtn, cancelBtn *widget.Button
	bar                 *meter
	status              *widget.Label
	result              *fyne.Container
	cancel              context.CancelFunc
	// done is closed once a run has ended and its result is shown.
	done chan struct{}
	// do runs a function on the UI thread (fyne.Do; tests run their own).
	do func(func())
}

func newStudyJob(title string, start func(), do func(func())) *studyJob {
	j := &studyJob{bar: newMeter(), status: widget.NewLabel(""), result: container.NewVBox(), do: do}
	j.status.Wrapping = fyne.TextWrapWord
	j.startBtn = widget.NewButtonWithIcon(title, theme.MediaPlayIcon(), start)
	j.cancelBtn = widget.NewButtonWithIcon("Cancel", theme.CancelIcon(), func() {
		if cancel := j.cancel; cancel != nil {
			j.status.SetText("Cancelling: the runs under way finish first…")
			cancel()
		}
	})
	j.cancelBtn.Disable()
	return j
}

func (j *studyJob) object(form fyne.CanvasObject) fyne.CanvasObject {
	return container.NewVBox(form, container.NewBorder(nil, nil, container.NewHBox(j.startBtn, j.cancelBtn), nil, j.bar), j.status, j.result)
}

// running tells whether a run has started and not yet ended.
func (j *studyJob) running() bool { return j.cancel != nil }

// run starts work in a goroutine. progress may be called from any
// goroutine with the share done, 0 to 1; show runs on the UI thread with
// work's result, cancelled or not.
func (j *studyJob) run(work func(ctx context.Context, progress func(float64)) func()) {
	if j.running() {
		return
	}
	ctx, cancel := context.WithCancel(context.Background())
	j.cancel = cancel
	j.done = make(chan struct{})
	done := j.done
	j.startBtn.Disable()
	j.cancelBtn.Enable()
	j.bar.SetValue(0)
	j.status.SetText("Running…")
	j.result.Objects = nil
	j.result.Refresh()
	go func() {
		show := work(ctx, func(f float64) { j.do(func() { j.bar.SetValue(math.Max(0, math.Min(1, f))) }) })
		j.do(func() {
			finished := ctx.Err() == nil // before cancel, which sets it
			cancel()
			j.cancel = nil
			j.startBtn.Enable()
			j.cancelBtn.Disable()
			if finished {
				j.bar.SetValue(1)
			}
			show()
			close(done)
		})
	}()
}

type studiesPanel struct {
	w  *Window
	do func(func()) // fyne.Do; tests run the UI thread themselves

	margin                          *studyJob
	mDirs, mLink                    *widget.Entry
	mSettle, mTol, mMax, mSeeds     *numberField
	sweep                           *studyJob
	sAxis1, sAxis2, sShove          *widget.Entry
	sMetric                         *widget.Select
	sDuration, sSeeds               *numberField
	sThreshold                      *widget.Entry
	tune                            *studyJob
	tPaths, tShove                  *widget.Entry
	tIterations                     *numberField
	lastMargin                      []margin.Result
	lastSweep                       *sweep.Result
	lastTune                        *tune.Result
	lastSweepMetric, lastSweepImage string
}

func newStudiesPanel(w *Window) *studiesPanel {
	p := &studiesPanel{w: w, do: fyne.Do}
	do := func(f func()) { p.do(f) }
	p.margin = newStudyJob("Find margin", p.startMargin, do)
	p.sweep = newStudyJob("Run sweep", p.startSweep, do)
	p.tune = newStudyJob("Tune", p.startTune, do)
	p.mDirs, p.mLink = widget.NewEntry(), widget.NewEntry()
	p.mLink.SetPlaceHolder("(the watched link)")
	p.mSettle = newNumberField("s", 0.1, 60, nil)
	p.mTol = newNumberField("N*s", 0.001, 100, nil)
	p.mMax = newNumberField("N*s", 0.01, 1000, nil)
	p.mSeeds = newNumberField("", 1, 64, nil)
	p.sAxis1, p.sAxis2, p.sShove = widget.NewEntry(), widget.NewEntry(), widget.NewEntry()
	p.sAxis2.SetPlaceHolder("optional second parameter, for a heat map")
	p.sShove.SetPlaceHolder("none, or at=0.5s,impulse=2N*s,dir=left")
	var names []string
	for _, m := range metric.All() {
		names = append(names, m.Name)
	}
	p.sMetric = widget.NewSelect(names, nil)
	p.sMetric.SetSelected("peak_tilt")
	p.sDuration = newNumberField("s", 0.01, 600, nil)
	p.sDuration.show(4)
	p.sSeeds = newNumberField("", 1, 64, nil)
	p.sSeeds.show(sweep.DefaultSeeds)
	p.sThreshold = widget.NewEntry()
	p.sThreshold.SetPlaceHolder("optional: a level to draw, such as 0.5 deg")
	p.tPaths, p.tShove = widget.NewEntry(), widget.NewEntry()
	p.tIterations = newNumberField("", 1, 1000, nil)
	p.tIterations.show(10)
	return p
}

// setRobot fills the inputs with what suits a newly opened robot.
func (p *studiesPanel) setRobot(r *models.Robot, params []control.ParamInfo, blocks []string) {
	// The margin study's own defaults for this robot.
	m := margin.Spec{}.Filled(r)
	p.mDirs.SetText(strings.Join(m.Dirs, ", "))
	p.mSettle.show(m.Settle)
	p.mTol.show(m.Tol)
	p.mMax.show(m.Max)
	p.mSeeds.show(float64(m.Seeds))
	p.mLink.SetText("")
	axis := ""
	if len(r.Actuators) > 0 {
		axis = "actuators.backlash=0:2mm:5"
	} else if len(params) > 0 {
		axis = fmt.Sprintf("%s=%g:%g:5", params[0].Path, params[0].SliderMin, params[0].SliderMax)
	}
	p.sAxis1.SetText(axis)
	p.sAxis2.SetText("")
	p.sShove.SetText("at=0.5s,impulse=1N*s,dir=left")
	p.tShove.SetText("at=0.5s,impulse=1N*s,dir=left")
	// The first loop's proportional and integral gains.
	var tune []string
	for _, b := range blocks {
		for _, q := range params {
			if q.Block == b && (q.Name == "kp" || q.Name == "ki") {
				tune = append(tune, q.Path)
			}
		}
		if len(tune) > 0 {
			break
		}
	}
	p.tPaths.SetText(strings.Join(tune, ", "))
}

func (p *studiesPanel) object() fyne.CanvasObject {
	mForm := widget.NewForm(
		widget.NewFormItem("Directions", p.mDirs),
		widget.NewFormItem("Link shoved", p.mLink),
		widget.NewFormItem("Stay up for", p.mSettle.object()),
		widget.NewFormItem("Within", p.mTol.object()),
		widget.NewFormItem("Give up above", p.mMax.object()),
		widget.NewFormItem("Noise seeds", p.mSeeds.object()),
	)
	sForm := widget.NewForm(
		widget.NewFormItem("Parameter", p.sAxis1),
		widget.NewFormItem("Second parameter", p.sAxis2),
		widget.NewFormItem("Measure", p.sMetric),
		widget.NewFormItem("Each run", p.sDuration.object()),
		widget.NewFormItem("Noise seeds", p.sSeeds.object()),
		widget.NewFormItem("Mark the level", p.sThreshold),
		widget.NewFormItem("Shove", p.sShove),
	)
	tForm := widget.NewForm(
		widget.NewFormItem("Gains", p.tPaths),
		widget.NewFormItem("Against the shove", p.tShove),
		widget.NewFormItem("Iterations", p.tIterations.object()),
	)
	intro := widget.NewLabel("Studies run on copies of the robot and gains as they are when you start them; the live run goes on. Results are saved in " + studiesDir() + ".")
	intro.Wrapping = fyne.TextWrapWord
	head := func(s string) fyne.CanvasObject {
		return widget.NewLabelWithStyle(s, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	}
	note := func(s string) fyne.CanvasObject {
		l := widget.NewLabel(s)
		l.Wrapping = fyne.TextWrapWord
		return l
	}
	return container.NewVScroll(container.NewVBox(intro,
		widget.NewSeparator(), head("Recovery margin"),
		note("The largest shove the robot takes and stays up, in each direction (left, right, forward, back, up, down or degrees from +x), searched once per noise seed: the margin moves by several N·s from seed to seed, so trust the shove every seed survived."),
		p.margin.object(mForm),
		widget.NewSeparator(), head("Sweep"),
		note("Runs a grid of values, PATH=FROM:TO:STEPS: a robot parameter such as actuators.backlash or a gain such as body_loop.kp."),
		p.sweep.object(sForm),
		widget.NewSeparator(), head("Tune"),
		note("Searches for gains that keep the torso still after the shove and its mirror image (Nelder-Mead)."),
		p.tune.object(tForm),
	))
}

// rig is the window's robot, controller and gains as they are now.
func (p *studiesPanel) rig() *rig.Rig {
	gs := p.w.Gains()
	return &rig.Rig{Robot: p.w.currentRobot(), Spec: p.w.spec, Gains: &gs}
}

// workers leaves a core for the window and the live run.
func workers() int { return max(1, runtimeProcs()-1) }

// read submits numberFields and returns their values, or false after
// showing the reason beside the first bad one.
func read(fields ...*numberField) ([]float64, bool) {
	out := make([]float64, len(fields))
	for i, f := range fields {
		v, err := parseValue(f.Entry.Text, f.unit, f.lo, f.hi)
		if err != nil {
			f.Reason.SetText(err.Error())
			f.Reason.Show()
			return nil, false
		}
		f.Reason.Hide()
		out[i] = v
	}
	return out, true
}

func splitList(text string) []string {
	var out []string
	for _, s := range strings.Split(text, ",") {
		if s = strings.TrimSpace(s); s != "" {
			out = append(out, s)
		}
	}
	return out
}

// fraction turns a study's count of runs done into the share done.
func fraction(progress func(float64)) func(done, total int) {
	return func(done, total int) { progress(float64(done) / float64(max(total, 1))) }
}

func (p *studiesPanel) startMargin() {
	vals, ok := read(p.mSettle, p.mTol, p.mMax, p.mSeeds)
	if !ok {
		return
	}
	spec := margin.Spec{Link: strings.TrimSpace(p.mLink.Text), Dirs: splitList(p.mDirs.Text),
		Settle: vals[0], Tol: vals[1], Max: vals[2], Seeds: int(vals[3]), Workers: workers()}
	r, look := p.rig(), plotStyle()
	p.margin.run(func(ctx context.Context, progress func(float64)) func() {
		spec.Progress = fraction(progress)
		res, err := margin.Find(ctx, r, spec)
		if err != nil && !errors.Is(err, context.Canceled) {
			return func() { p.margin.status.SetText("The margin study failed: " + err.Error()) }
		}
		// Draw off the UI thread; the plot is read back to show.
		var img image.Image
		pngFile, plotErr := autoSave("margin", ".png", func(path string) error { return plot.Margin(res, look, path) })
		if plotErr == nil {
			img, plotErr = readPNG(pngFile)
		}
		return func() { p.showMargin(res, err, spec.Filled(r.Robot), img, plotErr) }
	})
}

// plotView shows a study's plot, or why there is none.
func plotView(img image.Image, plotErr error) fyne.CanvasObject {
	if plotErr != nil {
		return widget.NewLabel("No plot: " + plotErr.Error())
	}
	im := canvas.NewImageFromImage(img)
	im.FillMode = canvas.ImageFillContain
	im.SetMinSize(fyne.NewSize(480, 360))
	return im
}

func (p *studiesPanel) showMargin(res []margin.Result, err error, spec margin.Spec, img image.Image, plotErr error) {
	j := p.margin
	p.lastMargin = res
	grid := container.NewGridWithColumns(6, bold("Direction"), bold("Every seed survives"), bold("Median"), bold("Felled a seed at"), bold("Seeds' spread"), bold("Runs"))
	ns := func(v float64) string { return fmt.Sprintf("%.4g N·s", v) }
	for _, r := range res {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, e := range r.Seeds {
			lo, hi = math.Min(lo, e.Survived), math.Max(hi, e.Survived)
		}
		trusted, felled, spread := ns(r.Trusted), ns(r.Felled), ns(lo)+" to "+ns(hi)
		switch {
		case math.IsInf(r.Felled, 1):
			felled = "none within the limit"
		case math.IsNaN(r.Felled):
			felled = "not found yet"
		}
		for _, e := range r.Seeds {
			if e.Unpushed {
				trusted, felled = "—", fmt.Sprintf("falls unpushed (seed %d)", e.Seed)
			}
		}
		for _, s := range []string{r.Dir, trusted, ns(r.Median), felled, spread, strconv.Itoa(r.Runs)} {
			grid.Add(widget.NewLabel(s))
		}
	}
	// Sideways scrolling: a wide table never widens the panel.
	j.result.Objects = []fyne.CanvasObject{container.NewHScroll(grid),
		widget.NewLabel(fmt.Sprintf("Over %d noise seeds from seed %d, each within %g N·s.", spec.Seeds, spec.Seed, spec.Tol))}
	j.result.Add(plotView(img, plotErr))
	state := "Done"
	if err != nil {
		state = "Cancelled: the brackets found so far"
	}
	file, werr := autoSave("margin", ".csv", func(path string) error { return writeMarginCSV(path, res) })
	j.status.SetText(state + saved(file, werr))
	j.result.Add(widget.NewButtonWithIcon("Save table…", theme.DocumentSaveIcon(), func() {
		p.w.saveFile("margin.csv", func(path string) error { return writeMarginCSV(path, res) })
	}))
	j.result.Refresh()
}

// writeMarginCSV writes a line per direction and seed, after a line per
// direction over all seeds (seed "all").
func writeMarginCSV(path string, res []margin.Result) error {
	return models.WriteFileAtomic(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		cw.Write([]string{"direction", "seed", "survived [N*s]", "fell [N*s]", "median [N*s]", "capped", "falls_unpushed", "runs"})
		for _, r := range res {
			cw.Write([]string{r.Dir, "all", formatNum(r.Trusted), formatNum(r.Felled), formatNum(r.Median), "", "", strconv.Itoa(r.Runs)})
		}
		for _, r := range res {
			for _, e := range r.Seeds {
				cw.Write([]string{r.Dir, strconv.FormatUint(e.Seed, 10), formatNum(e.Survived), formatNum(e.Fell), "", strconv.FormatBool(e.Capped), strconv.FormatBool(e.Unpushed), strconv.Itoa(e.Runs)})
			}
		}
		cw.Flush()
		return cw.Error()
	})
}

func formatNum(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func bold(s string) *widget.Label {
	return widget.NewLabelWithStyle(s, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
}

// parseShoves reads an optional shove entry.
func parseShoves(text string) ([]sim.Shove, error) {
	if strings.TrimSpace(text) == "" {
		return nil, nil
	}
	s, err := sim.ParseShove(text)
	if err != nil {
		return nil, err
	}
	return []sim.Shove{s}, nil
}

func (p *studiesPanel) startSweep() {
	j := p.sweep
	vals, ok := read(p.sDuration, p.sSeeds)
	if !ok {
		return
	}
	var axes []sweep.Axis
	for _, e := range []*widget.Entry{p.sAxis1, p.sAxis2} {
		if strings.TrimSpace(e.Text) == "" {
			continue
		}
		a, err := sweep.ParseAxis(e.Text)
		if err != nil {
			j.status.SetText(err.Error())
			return
		}
		axes = append(axes, a)
	}
	shoves, err := parseShoves(p.sShove.Text)
	if err != nil {
		j.status.SetText(err.Error())
		return
	}
	metric := p.sMetric.Selected
	metrics := []string{metric}
	if metric != "fell" {
		metrics = append(metrics, "fell")
	}
	spec := sweep.Spec{Axes: axes, Metrics: metrics, Duration: vals[0], Seeds: int(vals[1]), Shoves: shoves, Workers: workers()}
	threshold := p.sThreshold.Text
	r, look := p.rig(), plotStyle()
	j.run(func(ctx context.Context, progress func(float64)) func() {
		spec.Progress = fraction(progress)
		res, err := sweep.Run(ctx, r, spec)
		if err != nil && !errors.Is(err, context.Canceled) {
			return func() { j.status.SetText("The sweep failed: " + err.Error()) }
		}
		opt, optErr := plot.OptionsFor(res, metric, threshold)
		if optErr != nil {
			return func() { j.status.SetText(optErr.Error()) }
		}
		opt.Style = look
		// Save and draw off the UI thread; the plot is read back to show.
		csvFile, csvErr := autoSave("sweep", ".csv", func(path string) error { return writeSweepCSV(path, res) })
		var img image.Image
		pngFile, plotErr := autoSave("sweep", ".png", func(path string) error { return plot.Sweep(res, opt, path) })
		if plotErr == nil {
			img, plotErr = readPNG(pngFile)
		}
		return func() { p.showSweep(res, err, opt, img, plotErr, pngFile, csvFile, csvErr) }
	})
}

func writeSweepCSV(path string, res *sweep.Result) error {
	return models.WriteFileAtomic(path, res.WriteCSV)
}

func readPNG(path string) (image.Image, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return png.Decode(bytes.NewReader(data))
}

func (p *studiesPanel) showSweep(res *sweep.Result, err error, opt plot.Options, img image.Image, plotErr error, pngFile, csvFile string, csvErr error) {
	j := p.sweep
	p.lastSweep, p.lastSweepMetric, p.lastSweepImage = res, opt.Metric, pngFile
	state := fmt.Sprintf("Done: %d points, %d seeds each", len(res.Points), res.Seeds)
	if err != nil {
		state = fmt.Sprintf("Cancelled: %d of %d points done, kept", len(res.Points), res.Total)
	}
	failed := 0
	for _, pt := range res.Points {
		if pt.Err != "" {
			failed++
		}
	}
	if failed > 0 {
		state += fmt.Sprintf(", %d failed (left out of the plot)", failed)
	}
	j.status.SetText(state + saved(csvFile, csvErr))
	j.result.Add(plotView(img, plotErr))
	j.result.Add(container.NewHBox(
		widget.NewButtonWithIcon("Save points…", theme.DocumentSaveIcon(), func() {
			p.w.saveFile("sweep.csv", func(path string) error { return writeSweepCSV(path, res) })
		}),
		widget.NewButtonWithIcon("Save plot…", theme.DocumentSaveIcon(), func() {
			p.w.saveFile("sweep.png", func(path string) error { return plot.Sweep(res, opt, path) })
		}),
	))
	j.result.Refresh()
}

func (p *studiesPanel) startTune() {
	j := p.tune
	vals, ok := read(p.tIterations)
	if !ok {
		return
	}
	shoves, err := parseShoves(p.tShove.Text)
	if err == nil && len(shoves) == 0 {
		err = errors.New("give a shove to tune against")
	}
	if err != nil {
		j.status.SetText(err.Error())
		return
	}
	spec := tune.Spec{Paths: splitList(p.tPaths.Text), Shoves: shoves, Iterations: int(vals[0]), Workers: workers()}
	r := p.rig()
	j.run(func(ctx context.Context, progress func(float64)) func() {
		spec.Progress = func(tp tune.Progress) {
			progress(tp.Fraction())
		}
		res, err := tune.Run(ctx, r, spec)
		if err != nil && (res == nil || !errors.Is(err, context.Canceled)) {
			return func() { j.status.SetText("The tuning failed: " + err.Error()) }
		}
		file, werr := autoSave("tune", ".yaml", func(path string) error { return control.WriteGains(path, res.Gains) })
		return func() { p.showTune(res, err, file, werr) }
	})
}

func (p *studiesPanel) showTune(res *tune.Result, err error, file string, werr error) {
	j := p.tune
	p.lastTune = res
	state := "Done (" + res.Status + ")"
	if err != nil {
		state = "Cancelled: the best gains so far are kept"
	}
	j.status.SetText(fmt.Sprintf("%s: cost %.4g from %.4g %s, %d evaluations of %d runs each\nCost: %s", state, res.BestCost, res.StartCost, tune.CostUnit,
		res.Evaluations, res.Cases, res.CostMeaning) + saved(file, werr))
	grid := container.NewGridWithColumns(3, bold("Gain"), bold("Was"), bold("Tuned"))
	units := map[string]string{}
	for _, q := range p.w.params {
		units[q.Path] = q.Unit
	}
	for i, path := range res.Paths {
		grid.Add(widget.NewLabel(path))
		grid.Add(widget.NewLabel(formatValue(res.Start[i], units[path])))
		grid.Add(widget.NewLabel(formatValue(res.Best[i], units[path])))
	}
	gs := res.Gains
	apply := widget.NewButtonWithIcon("Apply to the running controller", theme.ConfirmIcon(), func() {
		if err := p.w.ApplyGains(gs); err != nil {
			p.w.showError("The tuned gains were not applied", err)
			return
		}
		p.w.notice.SetText("Tuned gains applied (Undo takes them back)")
	})
	save := widget.NewButtonWithIcon("Save gain set…", theme.DocumentSaveIcon(), func() {
		p.w.saveFile("tuned.yaml", func(path string) error { return control.WriteGains(path, gs) })
	})
	j.result.Objects = []fyne.CanvasObject{container.NewHScroll(grid), container.NewHBox(apply, save)}
	j.result.Refresh()
}

// studiesDir is where study results are saved without asking: beside the
// autosave directory.
func studiesDir() string {
	return filepath.Join(filepath.Dir(autosaveDir()), "studies")
}

// autoSave writes a result into the studies directory under a name made
// of the study and the time.
func autoSave(kind, ext string, write func(path string) error) (string, error) {
	dir := studiesDir()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	path := filepath.Join(dir, kind+"-"+time.Now().Format("20060102-150405.000")+ext)
	return path, write(path)
}

func saved(file string, err error) string {
	if err != nil {
		return "; not saved: " + err.Error()
	}
	return "; saved as " + file
}

func runtimeProcs() int { return runtime.GOMAXPROCS(0) }
