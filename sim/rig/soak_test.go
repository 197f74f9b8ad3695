package rig

import (
	"errors"
	"runtime"
	"testing"

	"teeter/control"
	"teeter/sim"
)

// A soak runs the frontal demo for a long simulated time under a random
// train of small shoves, with the recorder bounded to the last minute, and
// restarts the plant whenever the robot falls or the engine gives up, so
// that a controller still being tuned does not end it early. What it checks
// is that nothing grows with the length of the run.
const (
	soakRecordSeconds = 60   // recorder ring: the last minute
	soakMeanInterval  = 8.0  // s between shoves, on average
	soakMinImpulse    = 0.2  // N*s
	soakMaxImpulse    = 0.8  // N*s
	soakChunk         = 1.0  // s of simulated time per RunFor
	soakSeed          = 2026 // shove train
)

type soak struct {
	rig      *Rig
	train    []sim.Shove // over the whole soak, in soak time
	plant    *sim.Plant
	graph    *control.Graph
	offset   float64 // soak time at which the plant started
	falls    int
	blowUps  int
	stepping bool // the controller has a stepper and was asked to step
}

func newSoak(tb testing.TB, duration float64) *soak {
	tb.Helper()
	r, err := Load("builtin:frontal", "", "")
	if err != nil {
		tb.Fatal(err)
	}
	s := &soak{rig: r, train: sim.RandomShoves(soakSeed, 2, duration, soakMeanInterval, soakMinImpulse, soakMaxImpulse, nil)}
	if err := s.start(0); err != nil {
		tb.Fatal(err)
	}
	return s
}

// start builds a fresh plant at soak time at, with the shoves still to come.
func (s *soak) start(at float64) error {
	var shoves []sim.Shove
	for _, sh := range s.train {
		if sh.At >= at {
			sh.At -= at
			shoves = append(shoves, sh)
		}
	}
	p, g, err := s.rig.Build(sim.Options{
		RecordCapacity: int(soakRecordSeconds * s.rig.ControlRate()),
		Shoves:         shoves,
	})
	if err != nil {
		return err
	}
	// Step when the controller can: the window's stepping sequencer.
	s.stepping = g.Request("stepper", "start") == nil
	s.plant, s.graph, s.offset = p, g, at
	return nil
}

func (s *soak) now() float64 { return s.offset + s.plant.Time() }

// runTo advances the soak to time t, restarting after falls and blow-ups.
func (s *soak) runTo(t float64) error {
	for s.now() < t-1e-9 {
		err := s.plant.RunFor(min(soakChunk, t-s.now()))
		switch {
		case err == nil:
			continue
		case errors.Is(err, sim.ErrFallen):
			s.falls++
		case errors.Is(err, sim.ErrBlowUp):
			s.blowUps++
		default:
			return err
		}
		// A plant that stops at once would never advance the soak.
		restart := max(s.now(), s.offset+0.001)
		if err := s.start(restart); err != nil {
			return err
		}
	}
	return nil
}

func heapInUse() uint64 {
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	return m.HeapInuse
}

// BenchmarkSoakHour runs one simulated hour of the frontal demo and reports
// the heap in use at the start and at the end, the falls and blow-ups it
// restarted after, and the simulated seconds per wall second.
func BenchmarkSoakHour(b *testing.B) {
	const hour = 3600.0
	for b.Loop() {
		s := newSoak(b, hour)
		start := heapInUse()
		if err := s.runTo(hour); err != nil {
			b.Fatal(err)
		}
		end := heapInUse()
		b.ReportMetric(float64(start)/(1<<20), "MiB-heap-start")
		b.ReportMetric(float64(end)/(1<<20), "MiB-heap-end")
		b.ReportMetric(float64(s.falls), "falls")
		b.ReportMetric(float64(s.blowUps), "blowups")
		b.ReportMetric(float64(len(s.train)), "shoves")
		if s.stepping {
			b.ReportMetric(1, "stepping")
		} else {
			b.ReportMetric(0, "stepping")
		}
	}
	b.ReportMetric(hour*float64(b.N)/b.Elapsed().Seconds(), "sim-s/s")
}

// TestSoakMemoryFlat runs ten simulated minutes and checks that the heap in
// use after minute 10 is within a small bound of what it was after minute 1,
// when the recorder's ring is already full: a long run must not grow. This
// is a memory bound, not a timing. The bound is 1 MiB, about a tenth of the
// recorder's ring, so any per-step or per-shove leak of a few bytes over
// the 540 000 steps between the two readings would show.
func TestSoakMemoryFlat(t *testing.T) {
	if testing.Short() {
		t.Skip("ten simulated minutes")
	}
	const minute = 60.0
	s := newSoak(t, 10*minute)
	if err := s.runTo(minute + 1); err != nil {
		t.Fatal(err)
	}
	first := heapInUse()
	if err := s.runTo(10 * minute); err != nil {
		t.Fatal(err)
	}
	last := heapInUse()
	t.Logf("heap in use %.2f MiB after minute 1, %.2f MiB after minute 10; %d shoves, %d falls, %d blow-ups, stepping %v",
		float64(first)/(1<<20), float64(last)/(1<<20), len(s.train), s.falls, s.blowUps, s.stepping)
	const bound = 1 << 20
	if last > first+bound {
		t.Errorf("heap grew by %d bytes between minute 1 and minute 10, more than %d", last-first, bound)
	}
	if rows, want := s.plant.Recorder().Len(), int(soakRecordSeconds*s.graph.Rate()); s.plant.Time() >= soakRecordSeconds && rows != want {
		t.Errorf("recorder holds %d rows, want its capacity %d", rows, want)
	}
}
