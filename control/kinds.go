package control

import (
	"fmt"
	"math"

	"teeter/models"
)

// kind is one kind of block: how its file form is read and how it is built.
type kind struct {
	parse func(r *reader)
	build func(b *BlockSpec, c *buildContext) block
}

var kinds map[string]*kind

func init() {
	// Set in init because the sequencer's parser refers back to the table's
	// helpers; a plain initialiser would be an initialisation cycle.
	kinds = map[string]*kind{
		"sensor":      {parseSensor, buildSensor},
		"constant":    {parseConstant, buildConstant},
		"time":        {parseTime, buildTime},
		"step":        {parseStep, buildStep},
		"ramp":        {parseRamp, buildRamp},
		"sine":        {parseSine, buildSine},
		"square":      {parseSquare, buildSquare},
		"pid":         {parsePID, buildPID},
		"gain":        {parseGain, buildGain},
		"sum":         {parseSum, buildSum},
		"split":       {parseSplit, buildSplit},
		"limit":       {parseLimit, buildLimit},
		"rate_limit":  {parseRateLimit, buildRateLimit},
		"lowpass":     {parseLowpass, buildLowpass},
		"deadband":    {parseDeadband, buildDeadband},
		"tilt_filter": {parseTiltFilter, buildTiltFilter},
		"delay":       {parseDelay, buildDelay},
		"select":      {parseSelect, buildSelect},
		"sequencer":   {parseSequencer, buildSequencer},
		"actuator":    {parseActuator, buildActuator},
	}
}

// block is a built block. tick reads its inputs from and writes its outputs
// to the graph's signal slots; it must not allocate.
type block interface {
	reset(g *Graph)
	tick(g *Graph)
}

// ports is the part every built block shares: where its inputs come from and
// where its first output goes.
type ports struct {
	in  []int // slot of each input, -1 for an unwired optional input
	out int   // slot of the first output
}

func (p *ports) input(g *Graph, i int) float64 { return g.vals[p.in[i]] }

// unary declares the form of a block with one input in, one output out
// and one number parameter.
func (r *reader) unary(key string, n num) {
	r.number(key, n)
	r.inputs("in")
	r.outputs("out")
}

// --- sources ---

func parseSensor(r *reader) {
	r.text("channel", "", true)
	r.outputs("out")
}

type sensorBlock struct {
	ports
	channel int
}

func buildSensor(b *BlockSpec, c *buildContext) block {
	return &sensorBlock{ports: c.ports(), channel: c.channel(b)}
}

func (s *sensorBlock) reset(g *Graph) { g.vals[s.out] = 0 }
func (s *sensorBlock) tick(g *Graph) {
	if s.channel >= 0 && s.channel < len(g.readings) {
		g.vals[s.out] = g.readings[s.channel]
	}
}

func parseConstant(r *reader) {
	r.number("value", num{m: mSignal, required: true, min: -inf, max: inf})
	r.outputs("out")
}

type constantBlock struct {
	ports
	value float64
}

func buildConstant(b *BlockSpec, c *buildContext) block {
	k := &constantBlock{ports: c.ports()}
	c.bind(b, "value", &k.value)
	return k
}

func (k *constantBlock) reset(g *Graph) { g.vals[k.out] = k.value }
func (k *constantBlock) tick(g *Graph)  { g.vals[k.out] = k.value }

func parseTime(r *reader) { r.outputs("out") }

type timeBlock struct{ ports }

func buildTime(b *BlockSpec, c *buildContext) block { return &timeBlock{c.ports()} }
func (k *timeBlock) reset(g *Graph)                 { g.vals[k.out] = 0 }
func (k *timeBlock) tick(g *Graph)                  { g.vals[k.out] = g.now }

func parseStep(r *reader) {
	r.number("time", num{m: mDuration, min: 0, max: inf})
	r.number("before", num{m: mSignal, min: -inf, max: inf})
	r.number("after", num{m: mSignal, def: 1, min: -inf, max: inf})
	r.outputs("out")
}

type stepBlock struct {
	ports
	at, before, after float64
}

func buildStep(b *BlockSpec, c *buildContext) block {
	k := &stepBlock{ports: c.ports()}
	c.bind(b, "time", &k.at)
	c.bind(b, "before", &k.before)
	c.bind(b, "after", &k.after)
	return k
}

func (k *stepBlock) reset(g *Graph) { g.vals[k.out] = k.before }
func (k *stepBlock) tick(g *Graph) {
	if g.now >= k.at {
		g.vals[k.out] = k.after
	} else {
		g.vals[k.out] = k.before
	}
}

func parseRamp(r *reader) {
	r.number("start", num{m: mDuration, min: 0, max: inf})
	r.number("slope", num{m: mSlope, def: 1, min: -inf, max: inf})
	r.number("offset", num{m: mSignal, min: -inf, max: inf})
	r.outputs("out")
}

type rampBlock struct {
	ports
	start, slope, offset float64
}

func buildRamp(b *BlockSpec, c *buildContext) block {
	k := &rampBlock{ports: c.ports()}
	c.bind(b, "start", &k.start)
	c.bind(b, "slope", &k.slope)
	c.bind(b, "offset", &k.offset)
	return k
}

func (k *rampBlock) reset(g *Graph) { g.vals[k.out] = k.offset }
func (k *rampBlock) tick(g *Graph) {
	g.vals[k.out] = k.offset + k.slope*math.Max(0, g.now-k.start)
}

func parseSine(r *reader) {
	r.number("amplitude", num{m: mSignal, def: 1, min: -inf, max: inf})
	r.number("frequency", num{m: mFreq, required: true, min: 0, max: inf})
	r.number("phase", num{m: mAngle, min: -inf, max: inf})
	r.number("offset", num{m: mSignal, min: -inf, max: inf})
	r.outputs("out")
}

type sineBlock struct {
	ports
	amplitude, frequency, phase, offset float64
}

func buildSine(b *BlockSpec, c *buildContext) block {
	k := &sineBlock{ports: c.ports()}
	c.bind(b, "amplitude", &k.amplitude)
	c.bind(b, "frequency", &k.frequency)
	c.bind(b, "phase", &k.phase)
	c.bind(b, "offset", &k.offset)
	return k
}

func (k *sineBlock) reset(g *Graph) { g.vals[k.out] = k.offset + k.amplitude*math.Sin(k.phase) }
func (k *sineBlock) tick(g *Graph) {
	g.vals[k.out] = k.offset + k.amplitude*math.Sin(2*math.Pi*k.frequency*g.now+k.phase)
}

func parseSquare(r *reader) {
	r.number("amplitude", num{m: mSignal, def: 1, min: -inf, max: inf})
	r.number("frequency", num{m: mFreq, required: true, min: 0, max: inf})
	r.number("duty", num{m: mNumber, def: 0.5, min: 0, max: 1})
	r.number("offset", num{m: mSignal, min: -inf, max: inf})
	r.outputs("out")
}

type squareBlock struct {
	ports
	amplitude, frequency, duty, offset float64
}

func buildSquare(b *BlockSpec, c *buildContext) block {
	k := &squareBlock{ports: c.ports()}
	c.bind(b, "amplitude", &k.amplitude)
	c.bind(b, "frequency", &k.frequency)
	c.bind(b, "duty", &k.duty)
	c.bind(b, "offset", &k.offset)
	return k
}

func (k *squareBlock) reset(g *Graph) { g.vals[k.out] = k.offset + k.amplitude }

// tick gives offset+amplitude for the first duty fraction of each period and
// offset-amplitude for the rest.
func (k *squareBlock) tick(g *Graph) {
	_, frac := math.Modf(k.frequency * g.now)
	if frac < 0 {
		frac++
	}
	if frac < k.duty {
		g.vals[k.out] = k.offset + k.amplitude
	} else {
		g.vals[k.out] = k.offset - k.amplitude
	}
}

// --- arithmetic ---

func parseGain(r *reader) {
	r.unary("k", num{m: mNumber, required: true, min: -inf, max: inf})
}

type gainBlock struct {
	ports
	k float64
}

func buildGain(b *BlockSpec, c *buildContext) block {
	k := &gainBlock{ports: c.ports()}
	c.bind(b, "k", &k.k)
	return k
}

func (k *gainBlock) reset(g *Graph) { g.vals[k.out] = 0 }
func (k *gainBlock) tick(g *Graph)  { g.vals[k.out] = k.k * k.input(g, 0) }

func parseSum(r *reader) {
	signs := r.text("signs", "++", false)
	for i, c := range signs {
		if c != '+' && c != '-' {
			r.add(r.pos, "signs", "signs %q may hold only '+' and '-'", signs)
			return
		}
		r.inputs(fmt.Sprintf("in%d", i+1))
	}
	if len(r.b.Inputs) == 0 {
		r.add(r.pos, "signs", "signs is empty; give one '+' or '-' per input")
	}
	r.outputs("out")
}

type sumBlock struct {
	ports
	signs []float64
}

func buildSum(b *BlockSpec, c *buildContext) block {
	k := &sumBlock{ports: c.ports()}
	for _, s := range b.Options["signs"] {
		if s == '-' {
			k.signs = append(k.signs, -1)
		} else {
			k.signs = append(k.signs, 1)
		}
	}
	return k
}

func (k *sumBlock) reset(g *Graph) { g.vals[k.out] = 0 }
func (k *sumBlock) tick(g *Graph) {
	s := 0.0
	for i, sign := range k.signs {
		s += sign * g.vals[k.in[i]]
	}
	g.vals[k.out] = s
}

// parseSplit reads "outputs: {hip: 1.0, ankle: 0.4}": one input sent to
// several named outputs, each scaled by its own gain.
func parseSplit(r *reader) {
	r.inputs("in")
	f := r.field("outputs")
	if f == nil {
		r.add(r.pos, "outputs", "missing: a split block needs outputs, a mapping of output name to gain")
		return
	}
	if f.Value.Kind != models.Map {
		r.add(f.Value.Pos, "outputs", "outputs is a mapping of output name to gain, not %s", f.Value.Kind)
		return
	}
	for i := range f.Value.Fields {
		of := &f.Value.Fields[i]
		if !validName(of.Key) || of.Key == "in" {
			r.add(of.KeyPos, "outputs."+of.Key, "output name %q is not %s", of.Key, nameRule)
			continue
		}
		k, _, err := parseNumber(&of.Value, mNumber)
		if err != nil {
			r.add(of.Value.Pos, "outputs."+of.Key, "%v", err)
			continue
		}
		r.b.Outputs = append(r.b.Outputs, of.Key)
		r.b.Params = append(r.b.Params, Param{Name: of.Key, Value: k, Tunable: true, Min: -inf, Max: inf, Pos: of.Value.Pos})
	}
	if len(r.b.Outputs) == 0 {
		r.add(f.Value.Pos, "outputs", "a split block needs at least one output")
	}
}

type splitBlock struct {
	ports
	gains []float64
}

func buildSplit(b *BlockSpec, c *buildContext) block {
	k := &splitBlock{ports: c.ports(), gains: make([]float64, len(b.Outputs))}
	for i, o := range b.Outputs {
		c.bind(b, o, &k.gains[i])
	}
	return k
}

func (k *splitBlock) reset(g *Graph) {
	for i := range k.gains {
		g.vals[k.out+i] = 0
	}
}

func (k *splitBlock) tick(g *Graph) {
	x := k.input(g, 0)
	for i, gain := range k.gains {
		g.vals[k.out+i] = gain * x
	}
}

// --- shaping ---

func parseLimit(r *reader) {
	r.limits("limits", mSignal, true)
	r.inputs("in")
	r.outputs("out")
}

type limitBlock struct {
	ports
	lo, hi float64
}

func buildLimit(b *BlockSpec, c *buildContext) block {
	k := &limitBlock{ports: c.ports()}
	c.bind(b, "min", &k.lo)
	c.bind(b, "max", &k.hi)
	return k
}

func (k *limitBlock) reset(g *Graph) { g.vals[k.out] = clamp(0, k.lo, k.hi) }
func (k *limitBlock) tick(g *Graph)  { g.vals[k.out] = clamp(k.input(g, 0), k.lo, k.hi) }

func clamp(x, lo, hi float64) float64 {
	if x < lo {
		return lo
	}
	if x > hi {
		return hi
	}
	return x
}

func parseRateLimit(r *reader) {
	r.unary("rate", num{m: mSlope, required: true, min: 0, max: inf})
}

// startsAtInput is the part of a filter that starts at its first input
// after a reset rather than at 0, so that a signal that does not start at
// zero does not show a start-up transient.
type startsAtInput struct {
	ports
	started bool
}

func (k *startsAtInput) reset(g *Graph) { g.vals[k.out], k.started = 0, false }

func (k *startsAtInput) stateLen() int           { return 1 }
func (k *startsAtInput) saveState(dst []float64) { dst[0] = flag(k.started) }
func (k *startsAtInput) loadState(src []float64) { k.started = isSet(src[0]) }

// start sets the output to x on the first tick after a reset and reports
// whether it did.
func (k *startsAtInput) start(g *Graph, x float64) bool {
	if k.started {
		return false
	}
	g.vals[k.out], k.started = x, true
	return true
}

// rateLimitBlock follows its input, moving at most rate per second. It
// starts at its first input.
type rateLimitBlock struct {
	startsAtInput
	rate float64
}

func buildRateLimit(b *BlockSpec, c *buildContext) block {
	k := &rateLimitBlock{startsAtInput: startsAtInput{ports: c.ports()}}
	c.bind(b, "rate", &k.rate)
	return k
}

func (k *rateLimitBlock) tick(g *Graph) {
	x := k.input(g, 0)
	if k.start(g, x) {
		return
	}
	step := k.rate * g.h
	y := g.vals[k.out]
	g.vals[k.out] = clamp(x, y-step, y+step)
}

func parseLowpass(r *reader) {
	r.unary("tau", num{m: mDuration, required: true, min: 0, max: inf})
}

// lowpassBlock is a first-order lag, discretised exactly for an input held
// over a tick and applied at once: y[k] = a*y[k-1] + (1-a)*u[k] with
// a = exp(-h/tau), so it adds no tick of delay. It starts at its first
// input.
type lowpassBlock struct {
	startsAtInput
	tau float64
}

func buildLowpass(b *BlockSpec, c *buildContext) block {
	k := &lowpassBlock{startsAtInput: startsAtInput{ports: c.ports()}}
	c.bind(b, "tau", &k.tau)
	return k
}

func (k *lowpassBlock) tick(g *Graph) {
	x := k.input(g, 0)
	if k.start(g, x) {
		return
	}
	if k.tau <= 0 {
		g.vals[k.out] = x
		return
	}
	a := math.Exp(-g.h / k.tau)
	g.vals[k.out] = a*g.vals[k.out] + (1-a)*x
}

func parseDeadband(r *reader) {
	r.unary("band", num{m: mSignal, required: true, min: 0, max: inf})
}

// deadbandBlock gives zero within +-band and the input less band outside,
// so that its output is continuous.
type deadbandBlock struct {
	ports
	band float64
}

func buildDeadband(b *BlockSpec, c *buildContext) block {
	k := &deadbandBlock{ports: c.ports()}
	c.bind(b, "band", &k.band)
	return k
}

func (k *deadbandBlock) reset(g *Graph) { g.vals[k.out] = 0 }
func (k *deadbandBlock) tick(g *Graph) {
	x := k.input(g, 0)
	switch {
	case x > k.band:
		g.vals[k.out] = x - k.band
	case x < -k.band:
		g.vals[k.out] = x + k.band
	default:
		g.vals[k.out] = 0
	}
}

func parseTiltFilter(r *reader) {
	r.number("tau", num{m: mDuration, required: true, min: 0, max: inf})
	r.inputs("rate", "angle")
	r.outputs("out")
}

// tiltFilterBlock is a complementary filter: the gyro rate integrated is
// trusted over short times and the accelerometer angle over long ones,
// crossing over at 1/tau rad/s:
//
//	est = a*(est + h*rate) + (1-a)*angle,  a = tau/(tau+h)
//
// It starts at the first accelerometer angle.
type tiltFilterBlock struct {
	startsAtInput
	tau float64
}

func buildTiltFilter(b *BlockSpec, c *buildContext) block {
	k := &tiltFilterBlock{startsAtInput: startsAtInput{ports: c.ports()}}
	c.bind(b, "tau", &k.tau)
	return k
}

func (k *tiltFilterBlock) tick(g *Graph) {
	rate, angle := k.input(g, 0), k.input(g, 1)
	if k.start(g, angle) {
		return
	}
	a := k.tau / (k.tau + g.h)
	g.vals[k.out] = a*(g.vals[k.out]+g.h*rate) + (1-a)*angle
}

func parseDelay(r *reader) {
	r.unary("initial", num{m: mSignal, min: -inf, max: inf})
}

// delayBlock outputs its input of the previous tick. Its output is known
// before the tick starts, which is what lets a loop through it be ordered.
type delayBlock struct {
	ports
	initial float64
}

func buildDelay(b *BlockSpec, c *buildContext) block {
	k := &delayBlock{ports: c.ports()}
	c.bind(b, "initial", &k.initial)
	return k
}

func (k *delayBlock) reset(g *Graph) { g.vals[k.out] = k.initial }

// tick does nothing: the output was latched at the end of the last tick.
func (k *delayBlock) tick(g *Graph)  {}
func (k *delayBlock) latch(g *Graph) { g.vals[k.out] = k.input(g, 0) }

func parseSelect(r *reader) {
	r.number("count", num{m: mNumber, required: true, fixed: true, min: 1, max: 64})
	n := int(r.b.value("count"))
	if float64(n) != r.b.value("count") {
		r.add(r.pos, "count", "count is a whole number of inputs")
		n = 0
	}
	r.number("index", num{m: mNumber, def: 1, min: 1, max: math.Max(1, float64(n))})
	for i := 1; i <= n; i++ {
		r.inputs(fmt.Sprintf("in%d", i))
	}
	r.optionalInputs("index")
	r.outputs("out")
}

// selectBlock passes on input in<index>, counting from 1. The index comes
// from the index input when it is wired, else from the index parameter; it
// is rounded to the nearest input and clamped to the inputs there are.
type selectBlock struct {
	ports
	index float64
}

func buildSelect(b *BlockSpec, c *buildContext) block {
	k := &selectBlock{ports: c.ports()}
	c.bind(b, "index", &k.index)
	return k
}

func (k *selectBlock) reset(g *Graph) { g.vals[k.out] = 0 }
func (k *selectBlock) tick(g *Graph) {
	n := len(k.in) - 1
	idx := k.index
	if k.in[n] >= 0 {
		idx = g.vals[k.in[n]]
	}
	i := int(math.Round(clamp(idx, 1, float64(n))))
	g.vals[k.out] = g.vals[k.in[i-1]]
}

func parseActuator(r *reader) {
	r.text("actuator", "", true)
	r.inputs("in")
	r.outputs("out")
}

// actuatorBlock sends its input, clamped to [-1, 1], to an actuator. Its
// output is the command sent, for traces.
type actuatorBlock struct {
	ports
	actuator int
}

func buildActuator(b *BlockSpec, c *buildContext) block {
	return &actuatorBlock{ports: c.ports(), actuator: c.actuator(b)}
}

func (k *actuatorBlock) reset(g *Graph) { g.vals[k.out] = 0 }
func (k *actuatorBlock) tick(g *Graph) {
	u := k.input(g, 0)
	if math.IsNaN(u) {
		u = 0 // a NaN command would poison the plant; stopping is the safe choice
	}
	u = clamp(u, -1, 1)
	g.vals[k.out] = u
	if k.actuator >= 0 && k.actuator < len(g.commands) {
		g.commands[k.actuator] = u
	}
}
