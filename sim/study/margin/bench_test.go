package margin

import (
	"context"
	"testing"

	"teeter/sim/rig"
)

// BenchmarkMarginFrontal times a left and right recovery-margin search of
// the frontal demo (aim: at most 3 s).
func BenchmarkMarginFrontal(b *testing.B) {
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	runs := 0
	for b.Loop() {
		res, err := Find(context.Background(), r, Spec{Dirs: []string{"left", "right"}})
		if err != nil {
			b.Fatal(err)
		}
		runs = res[0].Runs + res[1].Runs
	}
	b.ReportMetric(float64(runs), "runs")
}
