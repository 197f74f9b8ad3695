package sweep

import (
	"fmt"
	"strconv"
	"strings"

	"teeter/models"
)

// Axis is one swept parameter: Steps values evenly from From to To. Path
// is a robot parameter path (models.SetParam) or a controller gain path
// (block.param).
type Axis struct {
	Path     string
	From, To float64
	Steps    int
	// Unit is the SI unit of the values as given ("m" for 0:2mm), "" when
	// they came without units.
	Unit string
}

// Value is the axis's i-th value.
func (a Axis) Value(i int) float64 {
	if a.Steps <= 1 {
		return a.From
	}
	return a.From + (a.To-a.From)*float64(i)/float64(a.Steps-1)
}

// ParseAxis reads PATH=FROM:TO:STEPS; FROM and TO may carry units
// ("actuators.backlash=0:2mm:9").
func ParseAxis(text string) (Axis, error) {
	path, grid, ok := strings.Cut(text, "=")
	parts := strings.Split(grid, ":")
	if !ok || path == "" || len(parts) != 3 {
		return Axis{}, fmt.Errorf("parameter %q: want PATH=FROM:TO:STEPS, as in actuators.backlash=0:2mm:9", text)
	}
	a := Axis{Path: strings.TrimSpace(path)}
	var err error
	var from, to models.Kind
	if a.From, from, err = models.ParseQuantity(strings.TrimSpace(parts[0])); err != nil {
		return Axis{}, fmt.Errorf("parameter %q: from: %v", text, err)
	}
	if a.To, to, err = models.ParseQuantity(strings.TrimSpace(parts[1])); err != nil {
		return Axis{}, fmt.Errorf("parameter %q: to: %v", text, err)
	}
	// A bare 0 takes the other end's unit.
	switch {
	case from == to || to == models.Dimensionless:
		a.Unit = from.Unit
	case from == models.Dimensionless:
		a.Unit = to.Unit
	default:
		return Axis{}, fmt.Errorf("parameter %q: from is a %s, to a %s", text, from.Name, to.Name)
	}
	if a.Steps, err = strconv.Atoi(strings.TrimSpace(parts[2])); err != nil || a.Steps < 1 || a.Steps > 100000 {
		return Axis{}, fmt.Errorf("parameter %q: steps %q: want a whole number from 1 to 100000", text, parts[2])
	}
	return a, nil
}

// gridValues are the axis values of a point; the last axis varies fastest.
func gridValues(axes []Axis, index int) []float64 {
	v := make([]float64, len(axes))
	for k := len(axes) - 1; k >= 0; k-- {
		n := max(axes[k].Steps, 1)
		v[k] = axes[k].Value(index % n)
		index /= n
	}
	return v
}

// Shard selects every Count-th point starting at Index; the zero value is
// the whole grid.
type Shard struct{ Index, Count int }

// ParseShard reads I/N.
func ParseShard(text string) (Shard, error) {
	is, ns, ok := strings.Cut(text, "/")
	i, err1 := strconv.Atoi(is)
	n, err2 := strconv.Atoi(ns)
	if !ok || err1 != nil || err2 != nil || n < 1 || i < 0 || i >= n {
		return Shard{}, fmt.Errorf("shard %q: want I/N with 0 <= I < N, as in 3/16", text)
	}
	return Shard{i, n}, nil
}

func (s Shard) has(point int) bool { return s.Count <= 1 || point%s.Count == s.Index }
