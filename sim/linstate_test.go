package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// A state vector is a state when what follows depends on it alone (the
// definition of state; Ogata, Modern Control Engineering, ch. 9), and the
// plant's step does not depend on the time (its physics are
// time-invariant): a state the plant reached, set into a twin restored to
// an earlier save, must go on as the plant does. The twin's clocks are an
// odd number of controller ticks behind, so the sensors' latency rings
// stand turned; the battery has given a little less charge, which the
// tolerance allows for.
func TestStateVectorCarriesTheState(t *testing.T) {
	for _, name := range []string{"sagittal", "frontal"} {
		r := loadBuiltin(t, name)
		r.NoiseScale = 0
		for i := range r.Joints {
			r.Joints[i].Friction = 0 // cp's friction motor keeps its impulse to itself
		}
		p, err := New(r, &HoldPose{}, Options{Shoves: []Shove{{At: 0.9, Impulse: models.Vec2{X: 0.2}}}})
		if err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(1); err != nil {
			t.Fatal(err)
		}
		saved, err := p.Save()
		if err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(0.035); err != nil { // 7 ticks
			t.Fatal(err)
		}
		// After one tick and after ten.
		spans := []float64{0.005, 0.045}
		n := p.StateLen()
		reached := make([]float64, n)
		p.State(reached)
		var ran [][]float64
		for _, s := range spans {
			if err := p.RunFor(s); err != nil {
				t.Fatal(err)
			}
			ran = append(ran, make([]float64, n))
			p.State(ran[len(ran)-1])
		}
		if err := p.Restore(saved); err != nil {
			t.Fatal(err)
		}
		p.SetState(reached)
		twin := make([]float64, n)
		for k, s := range spans {
			if err := p.RunFor(s); err != nil {
				t.Fatal(err)
			}
			p.State(twin)
			for i := range n {
				if d := math.Abs(ran[k][i] - twin[i]); d > 1e-6*math.Max(1, math.Abs(ran[k][i])) {
					t.Errorf("%s: state %d ran on to %.9g, its twin to %.9g", name, i, ran[k][i], twin[i])
				}
			}
		}
	}
}
