package sim

import (
	"math"
	"slices"
	"testing"

	"teeter/models"
)

// The number of arrivals of a Poisson process of rate r in a time T is
// Poisson distributed with mean and variance r*T, and its gaps are
// exponential with P(gap > g) = exp(-r*g) (Ross, Introduction to
// Probability Models, ch. 5). The checks allow five standard deviations, so
// a correct generator fails them about once in two million runs; the seeds
// are fixed, so the test either always passes or always fails.
func TestRandomShovesArePoissonArrivals(t *testing.T) {
	const from, to, mean = 10.0, 3610.0, 12.0
	lambdaT := (to - from) / mean // expected count, 300
	sd := math.Sqrt(lambdaT)
	const seeds = 200
	total, longGaps, gaps := 0, 0, 0
	var sizeSum float64
	for seed := uint64(1); seed <= seeds; seed++ {
		train := RandomShoves(seed, from, to, mean, 1, 3, nil)
		n := len(train)
		if math.Abs(float64(n)-lambdaT) > 5*sd {
			t.Errorf("seed %d: %d shoves in %g s at one per %g s, want %g ± %.0f", seed, n, to-from, mean, lambdaT, 5*sd)
		}
		total += n
		prev := from
		for _, s := range train {
			if s.At < prev || s.At >= to {
				t.Fatalf("seed %d: shove at %g s out of order or outside [%g, %g)", seed, s.At, from, to)
			}
			if s.At-prev > mean {
				longGaps++
			}
			gaps++
			prev = s.At
			size := math.Hypot(s.Impulse.X, s.Impulse.Y)
			if size < 1 || size > 3 || s.Impulse.Y != 0 || s.Link != "" || s.Point != nil || s.Hold != 0 {
				t.Fatalf("seed %d: shove %+v is not 1..3 N*s along x on the fall-watch link", seed, s)
			}
			sizeSum += size
		}
	}
	// The mean count over all seeds: sd of the mean is sd/sqrt(seeds).
	if m := float64(total) / seeds; math.Abs(m-lambdaT) > 5*sd/math.Sqrt(seeds) {
		t.Errorf("mean count %g over %d seeds, want %g ± %.2f", m, seeds, lambdaT, 5*sd/math.Sqrt(seeds))
	}
	// A gap longer than the mean has probability exp(-1); the fraction of
	// such gaps is binomial.
	p := math.Exp(-1)
	if f := float64(longGaps) / float64(gaps); math.Abs(f-p) > 5*math.Sqrt(p*(1-p)/float64(gaps)) {
		t.Errorf("%.4f of the gaps are longer than the mean interval, want exp(-1) = %.4f", f, p)
	}
	// Uniform sizes on [1, 3]: mean 2, standard deviation 2/sqrt(12).
	if m := sizeSum / float64(gaps); math.Abs(m-2) > 5*(2/math.Sqrt(12))/math.Sqrt(float64(gaps)) {
		t.Errorf("mean impulse %g N*s, want 2", m)
	}
}

func TestRandomShovesAreDeterministic(t *testing.T) {
	dirs := []models.Vec2{{X: 3, Y: 4}, {X: -1}}
	a := RandomShoves(7, 0, 600, 5, 0.5, 1, dirs)
	b := RandomShoves(7, 0, 600, 5, 0.5, 1, dirs)
	c := RandomShoves(8, 0, 600, 5, 0.5, 1, dirs)
	same := func(x, y []Shove) bool {
		return slices.EqualFunc(x, y, func(p, q Shove) bool { return p.At == q.At && p.Impulse == q.Impulse })
	}
	if len(a) == 0 || !same(a, b) {
		t.Fatalf("the same seed gave different trains (%d and %d shoves)", len(a), len(b))
	}
	if same(a, c) {
		t.Error("seeds 7 and 8 gave the same train")
	}
	// Both directions are used, normalised: (3, 4) has length 5.
	var up, left int
	for _, s := range a {
		size := math.Hypot(s.Impulse.X, s.Impulse.Y)
		switch {
		case s.Impulse.X > 0 && math.Abs(s.Impulse.X/size-0.6) < 1e-12 && math.Abs(s.Impulse.Y/size-0.8) < 1e-12:
			up++
		case s.Impulse.X < 0 && s.Impulse.Y == 0:
			left++
		default:
			t.Fatalf("shove %+v is along neither direction", s)
		}
	}
	if up == 0 || left == 0 {
		t.Errorf("directions used %d and %d times", up, left)
	}
}

func TestRandomShovesRefuseNonsense(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		name                   string
		from, to, mean, lo, hi float64
		dirs                   []models.Vec2
	}{
		{"empty span", 5, 5, 1, 1, 2, nil},
		{"backwards", 5, 4, 1, 1, 2, nil},
		{"no interval", 0, 5, 0, 1, 2, nil},
		{"negative impulse", 0, 5, 1, -1, 2, nil},
		{"inverted impulse", 0, 5, 1, 2, 1, nil},
		{"not a number", 0, nan, 1, 1, 2, nil},
		{"infinite", 0, math.Inf(1), 1, 1, 2, nil},
		{"zero direction", 0, 5, 1, 1, 2, []models.Vec2{{}}},
		{"no directions", 0, 5, 1, 1, 2, []models.Vec2{}},
	} {
		if got := RandomShoves(1, c.from, c.to, c.mean, c.lo, c.hi, c.dirs); got != nil {
			t.Errorf("%s: got %d shoves, want none", c.name, len(got))
		}
	}
	// A mean interval far below the span is cut at the bound.
	if n := len(RandomShoves(1, 0, 1, 1e-9, 1, 1, nil)); n != MaxRandomShoves {
		t.Errorf("a train of a billion shoves was cut at %d, want %d", n, MaxRandomShoves)
	}
}

func TestFirstRandomShovesAreTheTrainsStart(t *testing.T) {
	// Counting shoves instead of ending at a time is the same Poisson train
	// (the checks above), cut after n.
	long := RandomShoves(3, 1, 1000, 2, 0.5, 1, nil)
	first := FirstRandomShoves(10, 3, 1, 2, 0.5, 1, nil)
	if len(first) != 10 || len(long) < 10 || !slices.Equal(first, long[:10]) {
		t.Fatalf("the first 10 shoves %+v are not the train's first 10 %+v", first, long[:min(10, len(long))])
	}
	if got := FirstRandomShoves(0, 3, 1, 2, 0.5, 1, nil); got != nil {
		t.Errorf("no shoves asked for, got %d", len(got))
	}
	if got := FirstRandomShoves(5, 3, 1, 0, 0.5, 1, nil); got != nil {
		t.Errorf("a train with no interval gave %d shoves", len(got))
	}
}
