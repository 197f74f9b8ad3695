package control

import (
	"math"
	"testing"

	"teeter/models"
)

func TestBuiltinsBuildForTheirRobots(t *testing.T) {
	for _, name := range []string{"frontal", "sagittal", "pendulum"} {
		robot, err := models.Load("builtin:" + name)
		if err != nil {
			t.Fatalf("%s robot: %v", name, err)
		}
		spec, err := Builtin(name)
		if err != nil {
			t.Fatalf("%s controller: %v", name, err)
		}
		g, err := Build(spec, models.Channels(robot), models.ActuatorNames(robot))
		if err != nil {
			t.Fatalf("%s controller: %v", name, err)
		}
		readings := make([]float64, len(models.Channels(robot)))
		commands := make([]float64, len(robot.Actuators))
		g.Tick(0, readings, commands)
	}
}

// frontalNames gives the built-in frontal robot's channels and actuators.
func frontalNames() ([]string, []string) {
	robot, err := models.Load("builtin:frontal")
	if err != nil {
		panic(err)
	}
	return models.Channels(robot), models.ActuatorNames(robot)
}

// frontalGraph builds the named built-in controller for the built-in
// frontal robot, with a reading for each of its channels and a command for
// each of its actuators.
func frontalGraph(t testing.TB, controller string) (g *Graph, readings, commands []float64) {
	t.Helper()
	channels, actuators := frontalNames()
	spec, err := Builtin(controller)
	if err != nil {
		t.Fatal(err)
	}
	g, err = Build(spec, channels, actuators)
	if err != nil {
		t.Fatal(err)
	}
	return g, make([]float64, len(channels)), make([]float64, len(actuators))
}

func TestTickAllocatesNothing(t *testing.T) {
	// DEVELOPERS.md: the hot loop allocates nothing; measured with
	// testing.AllocsPerRun, both plain ticks and ticks that apply a
	// parameter change and an event request.
	g, readings, commands := frontalGraph(t, "frontal")
	signals := make([]float64, len(g.SignalNames()))
	now := 0.0
	allocs := testing.AllocsPerRun(500, func() {
		now += 0.005
		for i := range readings {
			readings[i] = 0.01 * float64(i)
		}
		g.Tick(now, readings, commands)
		g.Signals(signals)
	})
	if allocs != 0 {
		t.Fatalf("a tick allocates %v times", allocs)
	}
	// AllocsPerRun's warm-up call would apply a change made before it, so
	// every call makes its own: kp and the event alternate, so that each
	// tick applies a real change. Set and Request are counted too; they
	// come from the window while the plant runs and allocate nothing either.
	run := 0
	allocs = testing.AllocsPerRun(100, func() {
		run++
		g.Set("body_loop.kp", 1.5+0.1*float64(run%2))
		g.Request("stepper", [2]string{"start", "stop"}[run%2])
		now += 0.005
		g.Tick(now, readings, commands)
	})
	if allocs != 0 {
		t.Fatalf("a tick applying a change allocates %v times", allocs)
	}
}

func TestSetWhileTickingIsRaceFree(t *testing.T) {
	// Set and Request come from the window's goroutine while the plant
	// ticks; run under go test -race this checks the locking.
	g, readings, commands := frontalGraph(t, "frontal")
	done := make(chan bool)
	go func() {
		for i := 0; i < 200; i++ {
			g.Set("body_loop.kp", 1+float64(i%5)/10)
			g.Params()
			g.Request("stepper", "start")
		}
		done <- true
	}()
	for k := 0; k < 2000; k++ {
		g.Tick(float64(k)/200, readings, commands)
	}
	<-done
	g.Tick(10, readings, commands)
	if v, _ := g.Get("body_loop.kp"); v != 1+float64(199%5)/10 {
		t.Fatalf("last Set not kept: %g", v)
	}
}

// screwSign returns the sign of d(length)/d(angle) of a linear actuator at
// the joint's initial angle, by plane geometry: the To point rotates with
// the child link about the joint anchor.
func screwSign(t *testing.T, r *models.Robot, a models.Actuator) float64 {
	t.Helper()
	for _, j := range r.Joints {
		parentSide, childSide := a.From, a.To
		if j.Parent == a.To.Link && j.Child == a.From.Link {
			parentSide, childSide = a.To, a.From
		} else if j.Parent != a.From.Link || j.Child != a.To.Link {
			continue
		}
		length := func(q float64) float64 {
			s, c := math.Sin(q), math.Cos(q)
			dx, dy := childSide.Point.X-j.ChildAnchor.X, childSide.Point.Y-j.ChildAnchor.Y
			x := j.ParentAnchor.X + c*dx - s*dy
			y := j.ParentAnchor.Y + s*dx + c*dy
			return math.Hypot(x-parentSide.Point.X, y-parentSide.Point.Y)
		}
		d := length(j.Initial+1e-4) - length(j.Initial-1e-4)
		return math.Copysign(1, d)
	}
	t.Fatalf("no joint between %s and %s", a.From.Link, a.To.Link)
	return 0
}

func TestScrewDirectionsMatchGeometry(t *testing.T) {
	// A positive command lengthens a linear actuator (DEVELOPERS.md); the
	// built-in controllers' JOINT_dir gains must turn "raise the joint
	// angle" into the screw direction that does it, which the robot files'
	// attachment points fix (rotation of a point about the joint anchor).
	for _, name := range []string{"frontal", "sagittal"} {
		robot, err := models.Load("builtin:" + name)
		if err != nil {
			t.Fatal(err)
		}
		spec, err := Builtin(name)
		if err != nil {
			t.Fatal(err)
		}
		for _, a := range robot.Actuators {
			if a.From == nil {
				continue
			}
			var dir *BlockSpec
			for _, b := range spec.Blocks {
				if b.Name == a.Name+"_dir" {
					dir = b
				}
			}
			if dir == nil {
				t.Errorf("%s: no block %s_dir for linear actuator %s", name, a.Name, a.Name)
				continue
			}
			if got, want := dir.value("k"), screwSign(t, robot, a); got != want {
				t.Errorf("%s: %s_dir.k is %g but lengthening the screw moves the joint with sign %g", name, a.Name, got, want)
			}
		}
	}
}

func BenchmarkFrontalTick(b *testing.B) {
	g, readings, commands := frontalGraph(b, "frontal")
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		g.Tick(float64(i)/200, readings, commands)
	}
}
