package control

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"teeter/models"
)

// The C module is checked against the Go graph it was written from: the Go
// graph is the reference (its blocks are checked against closed forms in
// blocks_test.go, pid_test.go and sequencer_test.go), and the C must give
// its commands tick by tick within a tolerance of full scale (commands are
// in [-1, 1]), as issue 13 asks: 1e-4 with float, 1e-9 with double.
const (
	cFloatTol  = 1e-4
	cDoubleTol = 1e-9
)

// cFlags are the strictest flags the module must compile under.
var cFlags = []string{"-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic"}

func needGCC(t testing.TB) string {
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("gcc is not installed (make test installs it): the C module cannot be compiled here")
	}
	return gcc
}

// cRig is a controller built for a robot, with what the C module needs.
type cRig struct {
	name string
	spec *Spec
	opt  COptions
}

func loadCRig(t testing.TB, name, robot string, spec *Spec) cRig {
	t.Helper()
	r, err := models.Load("builtin:" + robot)
	if err != nil {
		t.Fatal(err)
	}
	return cRig{name: name, spec: spec, opt: COptions{Channels: models.Channels(r), Units: models.ChannelUnits(r), Actuators: models.ActuatorNames(r), Robot: "builtin:" + robot}}
}

func (r cRig) build(t testing.TB) *Graph {
	t.Helper()
	g, err := Build(r.spec, r.opt.Channels, r.opt.Actuators)
	if err != nil {
		t.Fatalf("%s: %v", r.name, err)
	}
	return g
}

// compileHarness writes the module of g into dir and compiles it with the
// test harness (testdata/cgen/harness.c) under cFlags.
func compileHarness(t testing.TB, g *Graph, opt COptions, dir string) string {
	t.Helper()
	gcc := needGCC(t)
	if err := g.WriteC(dir, opt); err != nil {
		t.Fatal(err)
	}
	harness, err := filepath.Abs("testdata/cgen/harness.c")
	if err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "harness")
	args := append(slices.Clone(cFlags), "-O1", "-I", dir, filepath.Join(dir, CSourceFile), harness, "-o", bin, "-lm")
	if out, err := exec.Command(gcc, args...).CombinedOutput(); err != nil {
		t.Fatalf("gcc %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	return bin
}

// A cScript is a list of harness commands (see harness.c), run through both
// the Go graph and the C.
type cScript []string

func (s *cScript) tick(now float64, in []float64) {
	var b strings.Builder
	b.WriteString("t " + strconv.FormatFloat(now, 'g', -1, 64))
	for _, x := range in {
		b.WriteString(" " + strconv.FormatFloat(x, 'g', -1, 64))
	}
	*s = append(*s, b.String())
}

func (s *cScript) add(format string, args ...any) { *s = append(*s, fmt.Sprintf(format, args...)) }

// runGo answers the script as the harness would, from the Go graph.
func (s cScript) runGo(t testing.TB, g *Graph, opt COptions) []string {
	t.Helper()
	params := g.Params()
	cmds := make([]float64, len(opt.Actuators))
	in := make([]float64, len(opt.Channels))
	result := func(err error) string {
		if err != nil {
			return "r -1"
		}
		return "r 0"
	}
	var out []string
	for _, line := range s {
		f := strings.Fields(line)
		switch f[0] {
		case "t":
			now, _ := strconv.ParseFloat(f[1], 64)
			for i := range in {
				in[i], _ = strconv.ParseFloat(f[2+i], 64)
			}
			g.Tick(now, in, cmds)
			var b strings.Builder
			b.WriteString("c")
			for _, u := range cmds {
				b.WriteString(" " + strconv.FormatFloat(u, 'g', -1, 64))
			}
			out = append(out, b.String())
		case "p":
			i, _ := strconv.Atoi(f[1])
			v, _ := strconv.ParseFloat(f[2], 64)
			if i < 0 || i >= len(params) {
				out = append(out, "r -1")
				continue
			}
			out = append(out, result(g.Set(params[i].Path, v)))
		case "e":
			out = append(out, result(g.Request(f[1], f[2])))
		case "x":
			i := slices.IndexFunc(params, func(p ParamInfo) bool { return p.Path == f[1] })
			out = append(out, fmt.Sprintf("r %d", i))
		case "g":
			i, _ := strconv.Atoi(f[1])
			v, err := g.Get(params[i].Path)
			if err != nil {
				t.Fatal(err)
			}
			out = append(out, "v "+strconv.FormatFloat(v, 'g', -1, 64))
		case "i":
			g.Reset()
			out = append(out, "r 0")
		case "n":
			out = append(out, "n")
			for i, ch := range opt.Channels {
				out = append(out, ch+" "+opt.Units[i])
			}
			out = append(out, opt.Actuators...)
			for _, p := range params {
				out = append(out, p.Path)
			}
		}
	}
	return out
}

func (s cScript) runC(t testing.TB, bin string) []string {
	t.Helper()
	cmd := exec.Command(bin)
	cmd.Stdin = strings.NewReader(strings.Join(s, "\n") + "\n")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("%s: %v\n%s", bin, err, stderr.Bytes())
	}
	return strings.Split(strings.TrimSuffix(string(out), "\n"), "\n")
}

// compare checks the C's answers against Go's: commands within tol, a
// parameter read back exactly as teeter_real holds it, everything else
// equal. It returns the largest command difference.
func (s cScript) compare(t testing.TB, goOut, cOut []string, double bool, tol float64) float64 {
	t.Helper()
	if len(goOut) != len(cOut) {
		t.Fatalf("the C answered %d lines, Go %d", len(cOut), len(goOut))
	}
	worst, bad := 0.0, 0
	for k := range goOut {
		gf, cf := strings.Fields(goOut[k]), strings.Fields(cOut[k])
		if len(gf) == 0 || len(gf) != len(cf) || gf[0] != cf[0] || (gf[0] != "c" && gf[0] != "v" && goOut[k] != cOut[k]) {
			t.Fatalf("answer %d to %q: C %q, Go %q", k, s.command(k, goOut), cOut[k], goOut[k])
		}
		for i := 1; i < len(gf) && (gf[0] == "c" || gf[0] == "v"); i++ {
			want, _ := strconv.ParseFloat(gf[i], 64)
			got, err := strconv.ParseFloat(cf[i], 64)
			if err != nil {
				t.Fatalf("answer %d: %v", k, err)
			}
			if gf[0] == "v" {
				if !double {
					want = float64(float32(want))
				}
				if got != want {
					t.Errorf("answer %d: teeter_get_param gave %v, Go's Get %v", k, got, want)
				}
				continue
			}
			d := math.Abs(got - want)
			if math.IsNaN(d) && math.IsNaN(got) == math.IsNaN(want) {
				d = 0
			}
			if !(d <= tol) {
				if bad++; bad <= 5 {
					t.Errorf("answer %d (%s), command %d: C %v, Go %v, off by %.3g (tolerance %g)", k, s.command(k, goOut), i-1, got, want, d, tol)
				}
			}
			worst = max(worst, d)
		}
	}
	return worst
}

// command names the script line that answer k answers ("n" has several).
func (s cScript) command(k int, goOut []string) string {
	line := 0
	for j := 0; j < k; j++ {
		if goOut[j] == "n" {
			continue
		}
		line++
	}
	if line < len(s) {
		text := s[line]
		if len(text) > 40 {
			text = text[:40] + "..."
		}
		return text
	}
	return "?"
}

// syntheticScript drives every channel with a mix of sines and noise at a
// scale suited to its unit, requests every sequencer event, changes every
// parameter at 40 % of the run (each by a quarter, rounded to a float so
// that float and double C are given the same value as Go), every PID's kp
// and b again at 70 %, and resets at 85 %.
func syntheticScript(g *Graph, opt COptions, ticks int, seed uint64) cScript {
	rng := rand.New(rand.NewPCG(seed, 1))
	type wave struct{ mean, amp, freq, phase, noise float64 }
	waves := make([]wave, len(opt.Channels))
	for i, u := range opt.Units {
		scale := map[string]float64{"rad": 0.15, "rad/s": 1, "m": 0.01, "N": 20}[u]
		w := wave{amp: scale, freq: 0.2 + 2*rng.Float64(), phase: 2 * math.Pi * rng.Float64(), noise: scale / 20}
		if u == "N" {
			w.mean = 20 // loads cross the stepping thresholds (10 N)
		}
		waves[i] = w
	}
	var s cScript
	s.add("n")
	params := g.Params()
	for i, p := range params {
		s.add("x %s", p.Path)
		s.add("g %d", i)
	}
	s.add("x no_block.kp")
	s.add("e no_block start")
	in := make([]float64, len(opt.Channels))
	h := 1 / g.Rate()
	events := g.sequencerEvents()
	for k := 0; k < ticks; k++ {
		now := float64(k) * h
		switch k {
		case ticks / 20, ticks / 2:
			for _, e := range events {
				s.add("e %s %s", e[0], e[1])
			}
			s.add("e %s no_event", firstOr(events, "no_block"))
		case ticks * 2 / 5:
			for i, p := range params {
				s.add("p %d %s", i, strconv.FormatFloat(float64(float32(p.Value*1.25+0.125)), 'g', -1, 64))
			}
			s.add("p %d 1", len(params))
			s.add("p -1 1")
		case ticks * 3 / 10, ticks * 11 / 20:
			// Every loop off, then on again.
			for i, p := range params {
				if _, pid := g.params[i].owner.(*pidBlock); pid && p.Name == "on" {
					s.add("p %d %d", i, map[bool]int{true: 0, false: 1}[k == ticks*3/10])
				}
			}
		case ticks * 7 / 10:
			for i, p := range params {
				if _, pid := g.params[i].owner.(*pidBlock); pid && (p.Name == "kp" || p.Name == "b") {
					s.add("p %d %s", i, strconv.FormatFloat(float64(float32(p.Value*0.6)), 'g', -1, 64))
				}
			}
		case ticks * 17 / 20:
			s.add("i")
		}
		for i, w := range waves {
			in[i] = w.mean + w.amp*math.Sin(2*math.Pi*w.freq*now+w.phase) + w.noise*rng.NormFloat64()
		}
		s.tick(now, in)
	}
	for i := range params {
		s.add("g %d", i)
	}
	return s
}

func firstOr(events [][2]string, none string) string {
	if len(events) == 0 {
		return none
	}
	return events[0][0]
}

// sequencerEvents lists every sequencer's events as {block, event}, in
// evaluation order.
func (g *Graph) sequencerEvents() [][2]string {
	var out [][2]string
	for _, b := range g.order {
		if s, ok := b.(*sequencerBlock); ok {
			for _, e := range s.events {
				out = append(out, [2]string{s.name, e})
			}
		}
	}
	return out
}

// cTestRigs are every built-in controller on its robot and the test
// controllers.
func cTestRigs(t testing.TB) []cRig {
	t.Helper()
	robotOf := map[string]string{"frontal": "frontal", "frontal_stepping": "frontal", "sagittal": "sagittal", "pendulum": "pendulum"}
	var rigs []cRig
	for _, name := range BuiltinNames() {
		spec, err := Builtin(name)
		if err != nil {
			t.Fatal(err)
		}
		robot, ok := robotOf[name]
		if !ok {
			t.Fatalf("built-in controller %s: which robot does it drive? add it to robotOf", name)
		}
		rigs = append(rigs, loadCRig(t, name, robot, spec))
	}
	for _, file := range []string{"../testdata/good_controller.yaml", "testdata/cgen/every_kind.yaml"} {
		spec, err := ParseFile(file)
		if err != nil {
			t.Fatal(err)
		}
		rigs = append(rigs, loadCRig(t, file, "frontal", spec))
	}
	return rigs
}

func TestCModuleMatchesGraph(t *testing.T) {
	needGCC(t)
	seen := map[string]bool{}
	for _, r := range cTestRigs(t) {
		for _, b := range r.spec.Blocks {
			seen[b.Kind] = true
		}
		for _, double := range []bool{false, true} {
			real, tol := "float", cFloatTol
			if double {
				real, tol = "double", cDoubleTol
			}
			t.Run(filepath.Base(r.name)+"/"+real, func(t *testing.T) {
				opt := r.opt
				opt.Double = double
				bin := compileHarness(t, r.build(t), opt, t.TempDir())
				script := syntheticScript(r.build(t), opt, 2000, 7)
				worst := script.compare(t, script.runGo(t, r.build(t), opt), script.runC(t, bin), double, tol)
				t.Logf("largest command difference %.3g (tolerance %g)", worst, tol)
			})
		}
	}
	for k := range kinds {
		if !seen[k] {
			t.Errorf("no test controller has a %s block: add one to testdata/cgen/every_kind.yaml", k)
		}
	}
}

// TestCModuleText checks what the header promises: the fixed API names of
// the lead's spec, the rate, the cautions, the source text made harmless,
// and the same bytes from the same graph.
func TestCModuleText(t *testing.T) {
	r := cTestRigs(t)[1] // frontal_stepping
	opt := r.opt
	opt.Controller = "ctl */ int injected; /* ??/\n#error x"
	h1, s1, err := r.build(t).CModule(opt)
	if err != nil {
		t.Fatal(err)
	}
	h2, s2, _ := r.build(t).CModule(opt)
	if !bytes.Equal(h1, h2) || !bytes.Equal(s1, s2) {
		t.Error("two graphs built from the same file gave different C")
	}
	for _, want := range []string{
		"#define TEETER_RATE_HZ 200.0\n", "#define TEETER_NUM_INPUTS 19\n", "#define TEETER_NUM_OUTPUTS 6\n",
		"typedef TEETER_REAL teeter_real;", "#define TEETER_REAL float\n",
		"void teeter_tick(double now_s, const teeter_real inputs[], teeter_real outputs[]);",
		"emergency stop", "reduced gains", "tethered",
		"#define TEETER_IN_TORSO_IMU_TILT 0 /* torso_imu.tilt, rad */",
		"#define TEETER_PARAM_BODY_LOOP_KP ",
		" * Controller: ctl _/ int injected; /_ __/_#error x\n",
	} {
		if !bytes.Contains(h1, []byte(want)) {
			t.Errorf("the header lacks %q", want)
		}
	}
	if bytes.Contains(s1, []byte("stdio")) || bytes.Contains(s1, []byte("malloc")) {
		t.Error("the module uses stdio or malloc")
	}
	dir := t.TempDir()
	bin := compileHarness(t, r.build(t), opt, dir)
	// stepper.idle.ramp is parameter 6 by the file: power_on.ramp and
	// .next2.after, then idle.lean, .lift_left, .lift_right, .on_one_foot, .ramp.
	if out := (cScript{"x stepper.idle.ramp", "e stepper start", "e stepper sit"}).runC(t, bin); !slices.Equal(out, []string{"r 6", "r 0", "r -1"}) {
		t.Errorf("index of stepper.idle.ramp, a known and an unknown request: %q", out)
	}
}
