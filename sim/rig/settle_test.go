package rig_test

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"teeter/sim"
)

// TestFrontalSettlesAfterSteppingStops walks the frontal robot on the spot
// with its built-in controller, stops it at different phases of the walk,
// and watches it stand. A robot that balanced within half a degree before
// stepping should do so again once its feet are down: within 5 s of the
// stop being taken the torso and both shins (the leg IMUs' links) stay within 1 deg for the
// next 60 s (common practice: a standing robot at rest holds about its
// sensor noise, not a slow rock).
func TestFrontalSettlesAfterSteppingStops(t *testing.T) {
	for _, c := range []struct {
		seed   uint64
		stopAt float64
	}{{1, 30}, {2, 21}} {
		t.Run(fmt.Sprintf("seed %d stop %g s", c.seed, c.stopAt), func(t *testing.T) {
			r := loadDemo(t, "builtin:frontal", "")
			p, g, err := r.Build(sim.Options{Seed: c.seed})
			if err != nil {
				t.Fatal(err)
			}
			rec := p.Recorder()
			stateCol := slices.Index(rec.Columns(), "stepper.state")
			state := func() float64 { return rec.At(rec.Len()-1, stateCol) }
			var snap sim.Snapshot
			requested, taken := false, 0.0
			worst := map[string]float64{}
			for p.Time() < c.stopAt+70 {
				switch {
				case p.Time() < 2:
				case !requested && p.Time() < c.stopAt:
					if state() == 1 {
						if err := g.Request("stepper", "start"); err != nil {
							t.Fatal(err)
						}
					}
				case !requested:
					requested = true
					if err := g.Request("stepper", "stop"); err != nil {
						t.Fatal(err)
					}
				}
				if err := p.Step(); err != nil {
					t.Fatalf("%.2f s: %v", p.Time(), err)
				}
				if requested && taken == 0 && state() == 1 {
					taken = p.Time() // back in idle: the stop is taken
				}
				if taken > 0 && p.Time() > taken+5 && p.Time() <= taken+65 {
					p.Snapshot(&snap)
					for _, l := range snap.Links {
						if l.Name == "torso" || l.Name == "shin_left" || l.Name == "shin_right" {
							worst[l.Name] = math.Max(worst[l.Name], math.Abs(l.Angle))
						}
					}
				}
			}
			if taken == 0 || p.Time() < taken+65 {
				t.Fatalf("the stop was not taken in time (taken at %.2f s)", taken)
			}
			for s, v := range worst {
				t.Logf("%s: within %.2f deg from %.1f s to %.1f s", s, v/deg, taken+5, taken+65)
				if v > 1*deg {
					t.Errorf("%s reaches %.2f deg after the stop; want within 1 deg", s, v/deg)
				}
			}
		})
	}
}
