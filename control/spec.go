package control

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"teeter/models"
)

// Spec is a controller as read from a file: its rate and its blocks, each
// checked on its own and wired by name. Build turns it into a Graph for one
// robot.
type Spec struct {
	Rate   float64 // Hz
	Blocks []*BlockSpec
	Pos    models.Pos
}

// BlockSpec is one block as written.
type BlockSpec struct {
	Name    string
	Kind    string
	Pos     models.Pos
	Inputs  []Port   // in the kind's port order
	Outputs []string // output names
	Params  []Param  // numbers; the tunable ones appear in gain sets
	// Options are the block's text settings: channel, actuator, signs,
	// anti_windup.
	Options map[string]string
	// optionPos is where each option written in the file was read from.
	optionPos map[string]models.Pos
	// Sequence holds the states of a sequencer block.
	Sequence *Sequence
}

// Port is one input of a block and the signal wired to it.
type Port struct {
	Name string
	// Source is "block.output", "block" for a block with one output, a
	// number (a constant), or "" when the port is not wired.
	Source   string
	Optional bool // may be left unwired
	Pos      models.Pos
}

// Param is a numeric parameter of a block, in SI units.
type Param struct {
	Name    string
	Value   float64
	Unit    string // SI unit of the value, "" for a plain number
	Tunable bool
	// Min and Max bound the values the parameter accepts.
	Min, Max float64
	// AtMost names a parameter of the same block this one may not exceed,
	// as a low limit may not exceed its high limit.
	AtMost string
	Pos    models.Pos
}

func (b *BlockSpec) param(name string) *Param {
	for i := range b.Params {
		if b.Params[i].Name == name {
			return &b.Params[i]
		}
	}
	return nil
}

func (b *BlockSpec) value(name string) float64 {
	if p := b.param(name); p != nil {
		return p.Value
	}
	return 0
}

// where is the position of an option's value, or of the block when the
// option was not written.
func (b *BlockSpec) where(option string) models.Pos {
	if p, ok := b.optionPos[option]; ok {
		return p
	}
	return b.Pos
}

// Parse reads a controller: the robot file's controller section, or a
// controller file's top level (which may itself hold a single controller
// key). It checks everything that does not depend on the robot, block by
// block and then the wiring, and reports every problem found.
func Parse(v *models.Value) (*Spec, error) {
	var ps models.Problems
	spec := parseSpec(v, &ps)
	if spec != nil {
		checkWiring(spec, &ps)
	}
	if err := ps.Err(); err != nil {
		return nil, err
	}
	return spec, nil
}

// ParseFile reads a controller file.
func ParseFile(file string) (*Spec, error) {
	v, err := models.ReadValue(file)
	if err != nil {
		return nil, err
	}
	return Parse(&v)
}

// ParseBytes reads controller file text; file names the source in problems.
func ParseBytes(file string, data []byte) (*Spec, error) {
	v, err := models.ParseValue(file, data)
	if err != nil {
		return nil, err
	}
	return Parse(&v)
}

const sectionPath = "controller"

func parseSpec(v *models.Value, ps *models.Problems) *Spec {
	if v == nil {
		ps.Add(models.Pos{}, sectionPath, "no controller given")
		return nil
	}
	if v.Kind == models.Map && len(v.Fields) == 1 && v.Fields[0].Key == "controller" {
		v = &v.Fields[0].Value
	}
	if v.Kind != models.Map {
		ps.Add(v.Pos, sectionPath, "a controller is a mapping with rate and blocks, not %s", v.Kind)
		return nil
	}
	spec := &Spec{Pos: mapPos(v)}
	var blocks *models.Value
	for i := range v.Fields {
		f := &v.Fields[i]
		switch f.Key {
		case "rate":
			spec.Rate = parseRate(f, ps)
		case "blocks":
			blocks = &f.Value
		case "description":
			// Free text for people.
		default:
			ps.Add(f.KeyPos, sectionPath+"."+f.Key, "unknown field %q (a controller has rate, blocks and description)", f.Key)
		}
	}
	if _, ok := v.Get("rate"); !ok {
		ps.Add(spec.Pos, sectionPath+".rate", "missing: the rate the controller ticks at, e.g. 200 Hz")
	}
	if blocks == nil {
		ps.Add(spec.Pos, sectionPath+".blocks", "missing: the list of blocks")
		return spec
	}
	if blocks.Kind != models.List {
		ps.Add(blocks.Pos, sectionPath+".blocks", "blocks is a list of blocks, not %s", blocks.Kind)
		return spec
	}
	first := map[string]models.Pos{}
	for i := range blocks.Items {
		b := parseBlock(&blocks.Items[i], i, ps)
		if b == nil {
			continue
		}
		if p, dup := first[b.Name]; dup {
			ps.Add(b.Pos, blockPath(b.Name), "duplicate block name %q (first used at line %d)", b.Name, p.Line)
			continue
		}
		first[b.Name] = b.Pos
		spec.Blocks = append(spec.Blocks, b)
	}
	return spec
}

func parseRate(f *models.Field, ps *models.Problems) float64 {
	path := sectionPath + ".rate"
	if f.Value.Kind != models.Scalar {
		ps.Add(f.Value.Pos, path, "rate is a frequency such as 200 Hz, not %s", f.Value.Kind)
		return 0
	}
	hz, _, err := models.ParseQuantity(f.Value.Text, models.Frequency)
	if err != nil {
		ps.Add(f.Value.Pos, path, "%v", err)
		return 0
	}
	if hz < 1 || hz > 100000 {
		ps.Add(f.Value.Pos, path, "rate %g Hz is outside 1 Hz .. 100 kHz", hz)
		return 0
	}
	return hz
}

func blockPath(name string) string { return sectionPath + ".blocks." + name }

// Blocks, outputs, states and events are named by the robot's rule: no dots,
// which separate block from output and block from parameter, and no leading
// digit or '-', which would make a source read as a number.
var validName = models.ValidName

const nameRule = models.NameRule

func parseBlock(v *models.Value, index int, ps *models.Problems) *BlockSpec {
	itemPath := fmt.Sprintf("%s.blocks[%d]", sectionPath, index)
	if v.Kind != models.Map {
		ps.Add(v.Pos, itemPath, "a block is a mapping with name, kind and its parameters, not %s", v.Kind)
		return nil
	}
	b := &BlockSpec{Pos: mapPos(v), Options: map[string]string{}, optionPos: map[string]models.Pos{}}
	nameField, ok := v.Get("name")
	switch {
	case !ok:
		ps.Add(b.Pos, itemPath+".name", "missing: every block needs a name")
		return nil
	case nameField.Value.Kind != models.Scalar || !validName(nameField.Value.Text):
		ps.Add(nameField.Value.Pos, itemPath+".name", "block name %q is not %s", nameField.Value.Text, nameRule)
		return nil
	}
	b.Name = nameField.Value.Text
	path := blockPath(b.Name)
	kindField, ok := v.Get("kind")
	if !ok {
		ps.Add(b.Pos, path+".kind", "missing: the kind of block (%s)", strings.Join(KindNames(), ", "))
		return nil
	}
	if kindField.Value.Kind != models.Scalar {
		ps.Add(kindField.Value.Pos, path+".kind", "kind is a word, not %s", kindField.Value.Kind)
		return nil
	}
	b.Kind = kindField.Value.Text
	def, ok := kinds[b.Kind]
	if !ok {
		ps.Add(kindField.Value.Pos, path+".kind", "unknown block kind %q (known: %s)", kindField.Value.Text, strings.Join(KindNames(), ", "))
		return nil
	}
	r := &reader{v: v, pos: b.Pos, path: path, ps: ps, b: b, used: map[string]bool{"name": true, "kind": true, "input": true}}
	def.parse(r)
	for i := range v.Fields {
		f := &v.Fields[i]
		if !r.used[f.Key] {
			ps.Add(f.KeyPos, path+"."+f.Key, "unknown parameter %q for a %s block (it has %s)", f.Key, b.Kind, strings.Join(r.known(), ", "))
		}
	}
	r.wire()
	return b
}

// KindNames lists the block kinds, sorted.
func KindNames() []string {
	names := make([]string, 0, len(kinds))
	for k := range kinds {
		names = append(names, k)
	}
	sort.Strings(names)
	return names
}

// reader reads the fields of one block, remembering those it used so that
// the rest can be reported as unknown parameters.
type reader struct {
	v     *models.Value
	path  string
	ps    *models.Problems
	b     *BlockSpec
	used  map[string]bool
	names []string   // parameters the kind knows, for messages
	pos   models.Pos // where the block starts
}

func (r *reader) known() []string {
	names := append([]string{"name", "kind"}, r.names...)
	if len(r.b.Inputs) > 0 {
		names = append(names, "input")
	}
	return names
}

func (r *reader) field(key string) *models.Field {
	r.used[key] = true
	r.names = append(r.names, key)
	f, ok := r.v.Get(key)
	if !ok {
		return nil
	}
	return f
}

func (r *reader) add(pos models.Pos, key, format string, args ...any) {
	p := r.path
	if key != "" {
		p += "." + key
	}
	r.ps.Add(pos, p, format, args...)
}

// measure says what a numeric parameter measures: the kinds of quantity its
// text may give and the unit it is labelled with.
type measure struct {
	kinds []models.Kind // accepted kinds; a bare number is SI of the first
	unit  string        // label when not taken from the kind, e.g. "1/s"
}

// The measures of the parameters, each named m and what it measures.
var (
	// mNumber is a plain number: a gain, a weight, a fraction.
	mNumber = measure{kinds: []models.Kind{models.Dimensionless}}
	// mSignal is a value a signal takes: an angle, a length, a PWM fraction.
	mSignal = measure{kinds: []models.Kind{models.Dimensionless, models.Angle, models.Length, models.Force,
		models.AngularSpeed, models.Speed}}
	// mSlope is how fast a signal may change, per second.
	mSlope    = measure{kinds: []models.Kind{models.Frequency, models.AngularSpeed, models.Speed}}
	mDuration = measure{kinds: []models.Kind{models.Duration}}
	mFreq     = measure{kinds: []models.Kind{models.Frequency}}
	mAngle    = measure{kinds: []models.Kind{models.Angle}}
	mPerTime  = measure{kinds: []models.Kind{models.Dimensionless}, unit: "1/s"}
	mTimeGain = measure{kinds: []models.Kind{models.Dimensionless}, unit: "s"}
)

// num describes a numeric parameter to read.
type num struct {
	m        measure
	def      float64
	required bool
	fixed    bool // structural, not in gain sets
	min, max float64
}

func parseNumber(val *models.Value, m measure) (float64, string, error) {
	if val.Kind != models.Scalar {
		return 0, "", fmt.Errorf("a number is wanted, not %s", val.Kind)
	}
	x, k, err := models.ParseQuantity(val.Text, m.kinds...)
	if err != nil {
		return 0, "", err
	}
	unit := k.Unit
	if m.unit != "" {
		unit = m.unit
	}
	return x, unit, nil
}

// number reads a numeric parameter into the block's Params.
func (r *reader) number(key string, n num) {
	f := r.field(key)
	p := Param{Name: key, Value: n.def, Tunable: !n.fixed, Min: n.min, Max: n.max, Pos: r.pos}
	p.Unit = n.m.unit
	if p.Unit == "" {
		p.Unit = n.m.kinds[0].Unit
	}
	if f == nil {
		if n.required {
			r.add(r.pos, key, "missing: a %s block needs %s", r.b.Kind, key)
		}
		r.b.Params = append(r.b.Params, p)
		return
	}
	p.Pos = f.Value.Pos
	x, unit, err := parseNumber(&f.Value, n.m)
	if err != nil {
		r.add(f.Value.Pos, key, "%v", err)
	} else if x < n.min || x > n.max {
		r.add(f.Value.Pos, key, "%s %s %s", key, f.Value.Text, outside(x, n.min, n.max))
	} else {
		p.Value, p.Unit = x, unit
	}
	r.b.Params = append(r.b.Params, p)
}

// outside says how x misses [lo, hi]: "is below 0" when only a lower bound
// is finite, "is outside 0 .. 1" when both are.
func outside(x, lo, hi float64) string {
	switch {
	case math.IsInf(hi, 1) && x < lo:
		return fmt.Sprintf("is below %g", lo)
	case math.IsInf(lo, -1) && x > hi:
		return fmt.Sprintf("is above %g", hi)
	}
	return "is outside " + rangeText(lo, hi)
}

func rangeText(lo, hi float64) string {
	switch {
	case math.IsInf(lo, -1) && math.IsInf(hi, 1):
		return "the finite numbers"
	case math.IsInf(hi, 1):
		return fmt.Sprintf("%g and up", lo)
	case math.IsInf(lo, -1):
		return fmt.Sprintf("up to %g", hi)
	}
	return fmt.Sprintf("%g .. %g", lo, hi)
}

var inf = math.Inf(1)

// limits reads "key: [lo, hi]" into parameters min and max. When the field
// is missing the parameters are left out, and it reports false.
func (r *reader) limits(key string, m measure, required bool) bool {
	f := r.field(key)
	if f == nil {
		if required {
			r.add(r.pos, key, "missing: a %s block needs %s [low, high]", r.b.Kind, key)
		}
		return false
	}
	pmin := Param{Name: "min", Unit: m.kinds[0].Unit, Tunable: true, Min: -inf, Max: inf, Pos: r.pos}
	pmax := pmin
	pmax.Name = "max"
	pmin.AtMost = "max"
	{
		pmin.Pos, pmax.Pos = f.Value.Pos, f.Value.Pos
		if f.Value.Kind != models.List || len(f.Value.Items) != 2 {
			r.add(f.Value.Pos, key, "%s is a list of two values [low, high]", key)
		} else {
			a, ua, errA := parseNumber(&f.Value.Items[0], m)
			b, ub, errB := parseNumber(&f.Value.Items[1], m)
			switch {
			case errA != nil:
				r.add(f.Value.Items[0].Pos, key+"[0]", "%v", errA)
			case errB != nil:
				r.add(f.Value.Items[1].Pos, key+"[1]", "%v", errB)
			case a > b:
				r.add(f.Value.Pos, key, "the low limit %s is above the high limit %s", f.Value.Items[0].Text, f.Value.Items[1].Text)
			default:
				pmin.Value, pmin.Unit, pmin.Pos = a, ua, f.Value.Items[0].Pos
				pmax.Value, pmax.Unit, pmax.Pos = b, ub, f.Value.Items[1].Pos
			}
		}
	}
	r.b.Params = append(r.b.Params, pmin, pmax)
	return true
}

// text reads a text option; choices, when given, are the values allowed.
func (r *reader) text(key, def string, required bool, choices ...string) string {
	f := r.field(key)
	if f == nil {
		if required {
			r.add(r.pos, key, "missing: a %s block needs %s", r.b.Kind, key)
		}
		if def != "" {
			r.b.Options[key] = def
		}
		return def
	}
	if f.Value.Kind != models.Scalar {
		r.add(f.Value.Pos, key, "%s is a word, not %s", key, f.Value.Kind)
		return def
	}
	s := f.Value.Text
	if len(choices) > 0 {
		ok := false
		for _, c := range choices {
			ok = ok || c == s
		}
		if !ok {
			r.add(f.Value.Pos, key, "%s %q is not one of %s", key, s, strings.Join(choices, ", "))
			return def
		}
	}
	r.b.Options[key] = s
	r.b.optionPos[key] = f.Value.Pos
	return s
}

// nameList reads a list of names (outputs, signals, events), each valid and
// listed once, with where each was written.
func (r *reader) nameList(key string, required bool) ([]string, []models.Pos) {
	f := r.field(key)
	if f == nil {
		if required {
			r.add(r.pos, key, "missing: a %s block needs %s", r.b.Kind, key)
		}
		return nil, nil
	}
	if f.Value.Kind != models.List {
		r.add(f.Value.Pos, key, "%s is a list of names, not %s", key, f.Value.Kind)
		return nil, nil
	}
	var names []string
	var poss []models.Pos
	seen := map[string]bool{}
	for i, it := range f.Value.Items {
		switch {
		case it.Kind != models.Scalar || !validName(it.Text):
			r.add(it.Pos, fmt.Sprintf("%s[%d]", key, i), "%q is not %s", it.Text, nameRule)
		case seen[it.Text]:
			r.add(it.Pos, fmt.Sprintf("%s[%d]", key, i), "%q is listed twice", it.Text)
		default:
			seen[it.Text] = true
			names = append(names, it.Text)
			poss = append(poss, it.Pos)
		}
	}
	return names, poss
}

func (r *reader) inputs(names ...string) {
	for _, n := range names {
		r.b.Inputs = append(r.b.Inputs, Port{Name: n, Pos: r.pos})
	}
}

func (r *reader) optionalInputs(names ...string) {
	for _, n := range names {
		r.b.Inputs = append(r.b.Inputs, Port{Name: n, Optional: true, Pos: r.pos})
	}
}

func (r *reader) outputs(names ...string) { r.b.Outputs = append(r.b.Outputs, names...) }

// wire reads the input field: a mapping of port to source, a list of
// sources in port order, or a single source for a block with one input.
func (r *reader) wire() {
	f, ok := r.v.Get("input")
	if !ok {
		return
	}
	b := r.b
	path := r.path + ".input"
	if len(b.Inputs) == 0 {
		r.ps.Add(f.KeyPos, path, "a %s block has no inputs", b.Kind)
		return
	}
	set := func(i int, val *models.Value, p string) {
		if val.Kind != models.Scalar || val.Text == "" {
			r.ps.Add(val.Pos, p, "a source is written block.output, block or a number, not %s", val.Kind)
			return
		}
		b.Inputs[i].Source, b.Inputs[i].Pos = val.Text, val.Pos
	}
	switch f.Value.Kind {
	case models.Scalar:
		if len(b.Inputs) != 1 {
			r.ps.Add(f.Value.Pos, path, "a %s block has inputs %s; wire them as a mapping", b.Kind, portList(b))
			return
		}
		set(0, &f.Value, path)
	case models.List:
		if len(f.Value.Items) > len(b.Inputs) {
			r.ps.Add(f.Value.Pos, path, "%d sources given but a %s block has %d inputs (%s)", len(f.Value.Items), b.Kind, len(b.Inputs), portList(b))
		}
		// The ports are wired all the same, so that they are not also
		// reported as unconnected.
		for i := range f.Value.Items[:min(len(f.Value.Items), len(b.Inputs))] {
			set(i, &f.Value.Items[i], fmt.Sprintf("%s[%d]", path, i))
		}
	case models.Map:
		for i := range f.Value.Fields {
			pf := &f.Value.Fields[i]
			k := b.port(pf.Key)
			if k < 0 {
				r.ps.Add(pf.KeyPos, path+"."+pf.Key, "input %q is not a port of %s block %s (ports: %s)", pf.Key, b.Kind, b.Name, portList(b))
				continue
			}
			set(k, &pf.Value, path+"."+pf.Key)
		}
	default:
		r.ps.Add(f.Value.Pos, path, "input is a mapping of port to source")
	}
}

func (b *BlockSpec) port(name string) int {
	for i, p := range b.Inputs {
		if p.Name == name {
			return i
		}
	}
	return -1
}

func portList(b *BlockSpec) string {
	names := make([]string, len(b.Inputs))
	for i, p := range b.Inputs {
		names[i] = p.Name
	}
	return strings.Join(names, ", ")
}

// mapPos is where a mapping starts as a person sees it: its opening brace
// for a flow mapping, its first key for a block mapping (the parser places
// a block mapping at its first colon).
func mapPos(v *models.Value) models.Pos {
	if v.Kind != models.Map || len(v.Fields) == 0 {
		return v.Pos
	}
	k := v.Fields[0].KeyPos
	if k.Line < v.Pos.Line || (k.Line == v.Pos.Line && k.Col < v.Pos.Col) {
		return k
	}
	return v.Pos
}
