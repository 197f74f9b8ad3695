package rig

import (
	"testing"
	"time"

	"teeter/sim"
)

// BenchmarkStep measures physics steps per second of the frontal demo.
func BenchmarkStep(b *testing.B) {
	r, err := Load("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	p, _, err := r.Build(sim.Options{RecordCapacity: 1000})
	if err != nil {
		b.Fatal(err)
	}
	start := time.Now()
	n := 0
	for b.Loop() {
		if err := p.Step(); err != nil {
			b.Fatal(err)
		}
		n++
	}
	b.ReportMetric(float64(n)/time.Since(start).Seconds(), "steps/s")
}
