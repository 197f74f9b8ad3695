package sim

import (
	"bytes"
	"math"
	"testing"

	"teeter/models"
)

// integrating is a controller with a state of its own: the commands
// follow a running sum of every reading, small enough not to saturate, so
// a controller restored wrong shows in the commands.
type integrating struct{ sum float64 }

func (c *integrating) Reset() { c.sum = 0 }
func (c *integrating) Tick(now float64, readings, commands []float64) {
	for _, r := range readings {
		c.sum += r
	}
	for i := range commands {
		commands[i] = 0.1 * math.Sin(c.sum+float64(i))
	}
}

func csv(t *testing.T, p *Plant) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := p.Recorder().WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestRestoreRepeatsTheRunBitForBit(t *testing.T) {
	// A run restored to a saved step and given the same shove must write
	// the recording of the run that never stopped, byte for byte (the
	// determinism DEVELOPERS.md promises: same model, scenario and seed,
	// same bytes), after the plant was first sent elsewhere.
	const at, end = 0.5, 1.5
	shove := []Shove{{At: at, Impulse: models.Vec2{X: -2}, Hold: 0.05}}
	for _, name := range models.BuiltinNames() {
		r := loadBuiltin(t, name)
		straight, err := New(r, &integrating{}, Options{Seed: 3, Shoves: shove})
		if err != nil {
			t.Fatal(err)
		}
		_ = straight.RunFor(end) // a fall is part of the run to repeat
		p, err := New(r, &integrating{}, Options{Seed: 3})
		if err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(at); err != nil {
			t.Fatal(err)
		}
		saved, err := p.Save()
		if err != nil {
			t.Fatal(err)
		}
		// Elsewhere first: another shove, held, and a longer run.
		if err := p.Schedule([]Shove{{At: at, Impulse: models.Vec2{X: 4}, Hold: 0.1}}); err != nil {
			t.Fatal(err)
		}
		_ = p.RunFor(end) // a fall here is fine: it is undone
		if err := p.Restore(saved); err != nil {
			t.Fatal(err)
		}
		if err := p.Schedule(shove); err != nil {
			t.Fatal(err)
		}
		_ = p.RunFor(end - at)
		if !bytes.Equal(csv(t, straight), csv(t, p)) {
			t.Errorf("%s: the restored run's recording differs from the straight run's", name)
		}
	}
}

func TestSaveNeedsTheWholeRecording(t *testing.T) {
	// The controller is restored by replaying its readings from the
	// recording; a ring that has dropped rows cannot give them.
	p, err := New(loadBuiltin(t, "pendulum"), &integrating{}, Options{RecordCapacity: 10})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.2); err != nil {
		t.Fatal(err)
	}
	if _, err := p.Save(); err == nil {
		t.Error("saved with rows dropped")
	}
}
