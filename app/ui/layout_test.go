package ui

import (
	"strings"
	"testing"
)

func TestWindowFitsTheSmallestScreenItIsMadeFor(t *testing.T) {
	// The window fits a 1280 x 800 screen (the laptop) on every
	// built-in robot and every tab, with long texts in the status, notice
	// and banner: nothing asks for more room than that, so the window
	// never grows by itself and nothing is drawn over or cut off.
	long := strings.Repeat("a long message from the simulation ", 12)
	for _, model := range []string{"builtin:frontal", "builtin:sagittal", "builtin:pendulum"} {
		w, _ := openTest(t, model)
		w.notice.SetText(long)
		w.showBanner(long)
		w.status.SetText(long)
		for i := range w.tabs.Items {
			w.tabs.SelectIndex(i)
			min := w.win.Content().MinSize()
			if min.Width > 1280 || min.Height > 800 {
				t.Errorf("%s, tab %s: the window needs %.0f x %.0f", model, w.tabs.Items[i].Text, min.Width, min.Height)
			}
		}
	}
}
