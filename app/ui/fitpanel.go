package ui

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot/vg"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/study/fit"
)

// fitPanel is a log opened beside the running robot: its signals overlay
// the traces in the reference colour, and Fit… fits the robot to it, as
// teeter fit does.
type fitPanel struct {
	w      *Window
	file   string
	log    *fit.Log
	job    *studyJob
	paths  *widget.Entry
	shoves *widget.Entry
	last   *fit.Result
}

// OpenLog reads a log recorded on the robot and overlays it on the traces;
// a bad log shows its problems and leaves the open one as it was.
func (w *Window) OpenLog(path string) error {
	data, err := os.ReadFile(path)
	if err == nil {
		var l *fit.Log
		if l, err = fit.ReadLogFor(path, data, w.study.rig()); err == nil {
			if w.fit == nil {
				w.fit = newFitPanel(w)
			}
			w.fit.file, w.fit.log, w.fit.last = path, l, nil
			w.lastVer = 0 // redraw the traces with it
			w.notice.SetText("Log " + filepath.Base(path) + " drawn behind the traces; Run > Fit… fits the robot to it")
			w.refresh()
			return nil
		}
	}
	w.showError("Could not open the log "+path, err)
	return err
}

func newFitPanel(w *Window) *fitPanel {
	p := &fitPanel{w: w, paths: widget.NewEntry(), shoves: widget.NewEntry()}
	p.paths.SetText("actuators.backlash,feet.pad_stiffness")
	p.shoves.SetPlaceHolder("none, or at=0.5s,impulse=1N*s,dir=left; at=1.5s,impulse=1N*s,dir=right")
	p.job = newStudyJob("Fit", p.start, func(f func()) { w.study.do(f) })
	return p
}

// overlay puts the log's columns for the shown signals in the traces'
// reference from time from on (the log's time counted from its first row,
// as a run's is from its reset); a signal the log lacks stays empty. With
// no log open it leaves the pinned run there.
func (p *fitPanel) overlay(tv *tracesView, from float64) {
	if p == nil || p.log == nil {
		return
	}
	t0 := p.log.Time[0]
	first := 0
	for first < len(p.log.Time) && p.log.Time[first]-t0 < from {
		first++
	}
	ref := &tv.ref
	ref.Time = ref.Time[:0]
	for _, t := range p.log.Time[first:] {
		ref.Time = append(ref.Time, t-t0)
	}
	ref.Values = ref.Values[:0]
	for _, i := range tv.shown {
		col := p.log.Column(tv.names[i])
		var v []float64
		if col != nil {
			v = col[first:]
		} else {
			v = make([]float64, len(ref.Time))
			for k := range v {
				v[k] = math.NaN()
			}
		}
		ref.Values = append(ref.Values, v)
	}
	tv.hasRef = true
}

// showFit opens the fit dialog for the open log.
func (w *Window) showFit() {
	if w.fit == nil || w.fit.log == nil {
		w.showError("No log open", fmt.Errorf("open a log recorded on the robot first (Run > Open log…)"))
		return
	}
	p := w.fit
	form := widget.NewForm(
		widget.NewFormItem("Log", widget.NewLabel(filepath.Base(p.file))),
		widget.NewFormItem("Parameters", p.paths),
		widget.NewFormItem("Shoves while logging", p.shoves),
	)
	content := container.NewVScroll(p.job.object(form))
	content.SetMinSize(fyne.NewSize(640, 520))
	dialog.NewCustom("Fit the robot to a log", "Close", content, w.win).Show()
}

// start runs the fit on the window's robot as it is now.
func (p *fitPanel) start() {
	var shoves []sim.Shove
	for _, text := range strings.Split(p.shoves.Text, ";") {
		if strings.TrimSpace(text) == "" {
			continue
		}
		s, err := sim.ParseShove(text)
		if err != nil {
			p.job.status.SetText("Shove: " + err.Error())
			return
		}
		shoves = append(shoves, s)
	}
	spec := fit.Spec{Log: p.log, Paths: strings.Split(strings.ReplaceAll(p.paths.Text, " ", ""), ","), Shoves: shoves,
		Workers: workers()}
	r := p.w.study.rig()
	p.job.run(func(ctx context.Context, progress func(float64)) func() {
		spec.Progress = func(pr fit.Progress) {
			p.job.do(func() { p.job.status.SetText(fmt.Sprintf("%d replays, best cost %.4g", pr.Evaluations, pr.Best)) })
		}
		res, err := fit.Run(ctx, r, spec)
		return func() { p.show(res, err) }
	})
}

// show puts a finished fit in the dialog: the values, the overlay, and
// buttons to apply the fitted robot to the window or save it.
func (p *fitPanel) show(res *fit.Result, err error) {
	p.last = res
	if res == nil {
		p.job.status.SetText(err.Error())
		return
	}
	status := fmt.Sprintf("%s in %d replays: cost %.4g → %.4g, %.3g per degree of freedom", res.Status, res.Evaluations, res.CostBefore, res.CostAfter, res.ReducedChiSquare)
	if err != nil {
		status = "Stopped: " + status
	}
	if res.Poor != "" {
		status += "\nUncertainties not valid: " + res.Poor
	}
	p.job.status.SetText(status)
	rows := container.NewVBox()
	for _, q := range res.Params {
		text := fmt.Sprintf("%s: %.5g → %.5g ± %.2g", q.Path, q.Start, q.Value, q.Uncertainty)
		switch {
		case !q.Identifiable:
			text = fmt.Sprintf("%s: %.5g, not identifiable (%s); kept", q.Path, q.Start, q.Note)
		case math.IsNaN(q.Uncertainty):
			text = fmt.Sprintf("%s: %.5g → %.5g ± (not valid)", q.Path, q.Start, q.Value)
		}
		rows.Add(widget.NewLabel(text))
	}
	apply := widget.NewButtonWithIcon("Apply to the robot", theme.ConfirmIcon(), func() {
		if err := p.w.installRobot(res.Robot, p.w.path); err != nil {
			p.w.showError("Could not apply the fitted robot", err)
			return
		}
		p.w.notice.SetText("Fitted values applied")
	})
	save := widget.NewButtonWithIcon("Save fitted robot…", theme.DocumentSaveIcon(), func() {
		p.w.saveFile("fitted.yaml", func(path string) error { return models.SaveFile(path, res.Robot) })
	})
	plot := canvas.NewImageFromImage(fit.OverlayImage(res, 6*vg.Inch).Image())
	plot.FillMode = canvas.ImageFillContain
	plot.SetMinSize(fyne.NewSize(600, float32(140*len(res.Signals))))
	p.job.result.Objects = []fyne.CanvasObject{rows, container.NewHBox(apply, save), plot}
	p.job.result.Refresh()
}
