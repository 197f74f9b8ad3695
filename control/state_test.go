package control

import (
	"math"
	"slices"
	"testing"
)

// The state of a system at one time and its inputs from then on determine
// its outputs from then on (the definition of state, Ogata, Modern Control
// Engineering, ch. 9). So a graph set back to a saved state and given the
// same readings must repeat its commands exactly, whatever ran between.
func TestSavedStateRepeatsTheCommands(t *testing.T) {
	for _, name := range []string{"frontal", "frontal_stepping"} {
		g, readings, commands := frontalGraph(t, name)
		drive := func(k int) []float64 {
			for i := range readings {
				readings[i] = 0.05 * math.Sin(0.07*float64(k*(i+1)))
			}
			g.Tick(float64(k)/g.Rate(), readings, commands)
			return slices.Clone(commands)
		}
		for k := range 300 { // past the stepping sequencer's start at 1 s
			drive(k)
		}
		state := make([]float64, g.StateLen())
		g.SaveState(state)
		var first [][]float64
		for k := 300; k < 500; k++ {
			first = append(first, drive(k))
		}
		g.LoadState(state)
		for k := 300; k < 500; k++ {
			if got := drive(k); !slices.Equal(got, first[k-300]) {
				t.Fatalf("%s: tick %d after loading the state: commands %v, first time %v", name, k, got, first[k-300])
			}
		}
	}
}

func TestStateIOAllocatesNothing(t *testing.T) {
	// DEVELOPERS.md: the hot loop allocates nothing; a linearisation saves
	// and loads the state once per column.
	g, _, _ := frontalGraph(t, "frontal")
	state := make([]float64, g.StateLen())
	if n := testing.AllocsPerRun(100, func() { g.SaveState(state); g.LoadState(state) }); n != 0 {
		t.Errorf("%v allocations per save and load", n)
	}
}
