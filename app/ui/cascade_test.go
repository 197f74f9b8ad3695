package ui

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2"
)

// cardText is a card's lines joined.
func cardText(c *cascadeCard) string {
	var b strings.Builder
	for _, l := range c.lines {
		b.WriteString(l.Text + "\n")
	}
	return b.String()
}

func TestControllerTabDrawsTheCascade(t *testing.T) {
	// The frontal controller is a three-level cascade (its file's header,
	// control/builtin/frontal.yaml): the body loop on the torso tilt at the
	// top, the leg loops on the leg IMUs below, the joint loops on the pots
	// above the screws. Cards say what each loop measures and the split's
	// shares; the sequence shows its state; while it runs each loop shows
	// its error and output.
	w, _ := openTest(t, "builtin:frontal")
	w.tabs.Select(w.graphTab)
	depth := cascadeDepth(w.spec)
	level := map[string]int{}
	for i, b := range w.spec.Blocks {
		level[b.Name] = depth[i]
	}
	if !(level["body_loop"] > level["leg_angle_left"] && level["leg_angle_left"] > level["hip_left_loop"] && level["hip_left_loop"] == 1) {
		t.Fatalf("levels: body %d, leg %d, hip %d", level["body_loop"], level["leg_angle_left"], level["hip_left_loop"])
	}
	body := cardText(w.graph.cards["body_loop"])
	if !strings.Contains(body, "measures torso_tilt") {
		t.Errorf("body loop card: %q", body)
	}
	if leg := cardText(w.graph.cards["leg_angle_left"]); !strings.Contains(leg, "hip ×1") || !strings.Contains(leg, "ankle ×-0.5") {
		t.Errorf("leg loop card does not show its split's shares: %q", leg)
	}
	if taps := sensorsOf(w.spec, "torso_tilt"); len(taps) != 1 || taps[0] != "torso_imu.tilt" {
		t.Errorf("the body loop taps %v", taps)
	}
	seq := w.graph.cards["stepper"]
	if seq == nil || !strings.Contains(cardText(seq), "state: idle") {
		t.Fatal("no sequence card in its idle state")
	}
	w.requestEvent("stepper", "start")
	<-w.run.Run()
	waitFor(func() bool { return w.run.Status().Time > 0.5 })
	<-w.run.Pause()
	w.lastVer = 0
	w.refresh()
	if text := cardText(seq); strings.Contains(text, "state: idle") {
		t.Errorf("after start the sequence still shows %q", text)
	}
	if text := cardText(w.graph.cards["body_loop"]); !strings.Contains(text, "e ") || !strings.Contains(text, "u ") {
		t.Errorf("no live values on the body loop: %q", text)
	}
	// A loop switched off says so.
	w.setGain("body_loop.on", 0, false)
	w.lastVer = 0
	w.refresh()
	if text := cardText(w.graph.cards["body_loop"]); !strings.Contains(text, "off") {
		t.Errorf("a loop switched off shows %q", text)
	}
}

func TestEveryBuiltinCascadeFitsWithFitToView(t *testing.T) {
	// Fit to view: each built-in controller's cascade fits the Controller
	// tab of a 1280 x 800 window without scrolling (the tab's area is what
	// the window leaves it: about 480 x 330 above the block panel).
	for _, model := range []string{"builtin:frontal", "builtin:sagittal", "builtin:pendulum"} {
		w, _ := openTest(t, model)
		w.tabs.Select(w.graphTab)
		w.graph.setCompact(true)
		area := fyne.NewSize(480, 330)
		// Laid out at the tab's width, the rows of cards wrap to it.
		w.graph.content.Resize(fyne.NewSize(area.Width, 2000))
		min := w.graph.content.MinSize()
		if min.Width > area.Width || min.Height > area.Height {
			t.Errorf("%s: the fitted cascade needs %.0f x %.0f", model, min.Width, min.Height)
		}
	}
}
