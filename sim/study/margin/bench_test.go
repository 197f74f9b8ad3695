package margin

import (
	"context"
	"syscall"
	"testing"
	"time"

	"teeter/sim/rig"
)

// BenchmarkMarginFrontal times the left and right recovery margin of the
// frontal demo over the default 8 seeds (aim: at most 5 s on 2 cores). It
// also reports the processor time, which a loaded machine does not
// stretch: on two idle cores the wall time is about half of it.
func BenchmarkMarginFrontal(b *testing.B) {
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	runs := 0
	cpu0 := cpuTime()
	for b.Loop() {
		res, err := Find(context.Background(), r, Spec{Dirs: []string{"left", "right"}})
		if err != nil {
			b.Fatal(err)
		}
		runs = res[0].Runs + res[1].Runs
	}
	b.ReportMetric(float64(runs), "runs")
	b.ReportMetric((cpuTime()-cpu0).Seconds()/float64(b.N), "cpu-s/op")
}

// cpuTime is the processor time this process has used.
func cpuTime() time.Duration {
	var u syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &u)
	return time.Duration(u.Utime.Nano() + u.Stime.Nano())
}
