package control

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// COptions say how to write a graph as a C module and what its header
// comment tells the reader.
type COptions struct {
	// Double makes teeter_real double; the default is float.
	Double bool
	// Channels and Units name the sensor channels the graph was built for,
	// in the plant's order, and give their SI units; Actuators names the
	// actuators.
	Channels, Units, Actuators []string
	// Robot, Controller and Gains say where the graph came from; an empty
	// one is left out.
	Robot, Controller, Gains string
}

// C file names, fixed by the API firmware includes.
const (
	CHeaderFile = "teeter_controller.h"
	CSourceFile = "teeter_controller.c"
)

// cBlock is a built block that writes itself as C: its state, its reset,
// its tick and, for a delay, its latch, with the same equations in the same
// order as its Go reset and tick.
type cBlock interface {
	// cClock reports whether the block is a function of the clock (a source
	// or a sequencer). Such a block computes in double, its parameters and
	// outputs as teeter writes them, so that a timed transition, or a ramp
	// passing a select's half-way point, happens on the same tick as in
	// teeter even when teeter_real is float.
	cClock() bool
	cEmit(w *cWriter)
}

// cgen holds what the module's parts share while it is written.
type cgen struct {
	g       *Graph
	opt     COptions
	params  []ParamInfo
	paramOf map[*float64]int
	// slot gives the C of each signal slot, by the graph's slot number:
	// "sig[3]" or "clk[1]" for a block output, the value for a literal.
	slot      []string
	clockSlot []bool
	literal   []bool
	nSig      int
	nClk      int
	needClamp bool
	err       error

	decl, funcs, reset, tick, latch bytes.Buffer
	// retune holds, per parameter, the C run before a change of it is
	// applied (a PID's bumpless transfer).
	retune map[int]string
	// events lists every sequencer event that teeter_request can latch.
	events []cEvent
}

type cEvent struct {
	block, event string
	latched      string // C lvalue of its latch
}

// CModule writes the graph as a self-contained C99 module: the header and
// the source of CHeaderFile and CSourceFile. The output depends only on the
// graph and opt, byte for byte.
func (g *Graph) CModule(opt COptions) (header, source []byte, err error) {
	if n := g.maxChannel(); n >= len(opt.Channels) || len(opt.Units) != len(opt.Channels) {
		return nil, nil, fmt.Errorf("C module: the graph reads %d sensor channels; %d names and %d units given", n+1, len(opt.Channels), len(opt.Units))
	}
	if n := g.maxActuator(); n >= len(opt.Actuators) {
		return nil, nil, fmt.Errorf("C module: the graph drives %d actuators; %d names given", n+1, len(opt.Actuators))
	}
	c := &cgen{g: g, opt: opt, params: g.Params(), paramOf: map[*float64]int{}, retune: map[int]string{}}
	for i := range g.params {
		c.paramOf[g.params[i].ptr] = i
	}
	c.assignSlots()
	for i, b := range g.order {
		b.(cBlock).cEmit(&cWriter{c: c, n: i, spec: g.orderSpecs[i]})
	}
	if c.err != nil {
		return nil, nil, c.err
	}
	return c.header(), c.source(), nil
}

// WriteC writes the C module into dir, making dir if need be.
func (g *Graph) WriteC(dir string, opt COptions) error {
	h, s, err := g.CModule(opt)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := writeBytes(filepath.Join(dir, CHeaderFile), h); err != nil {
		return err
	}
	return writeBytes(filepath.Join(dir, CSourceFile), s)
}

func (g *Graph) maxChannel() int {
	n := -1
	for _, b := range g.order {
		if s, ok := b.(*sensorBlock); ok {
			n = max(n, s.channel)
		}
	}
	return n
}

func (g *Graph) maxActuator() int {
	n := -1
	for _, b := range g.order {
		if a, ok := b.(*actuatorBlock); ok {
			n = max(n, a.actuator)
		}
	}
	return n
}

// assignSlots gives each block output a place in sig (teeter_real) or clk
// (double), and each literal input its constant.
func (c *cgen) assignSlots() {
	g := c.g
	n := len(g.vals)
	c.slot, c.clockSlot, c.literal = make([]string, n), make([]bool, n), make([]bool, n)
	for i, b := range g.order {
		out := b.(interface{ outSlot() int }).outSlot()
		clock := b.(cBlock).cClock()
		for k := range g.orderSpecs[i].Outputs {
			if clock {
				c.slot[out+k], c.clockSlot[out+k] = fmt.Sprintf("clk[%d]", c.nClk), true
				c.nClk++
			} else {
				c.slot[out+k] = fmt.Sprintf("sig[%d]", c.nSig)
				c.nSig++
			}
		}
	}
	for i, x := range g.literals {
		s := len(g.signalNames) + i
		c.slot[s], c.literal[s] = cDouble(x), true
	}
}

func (p *ports) outSlot() int { return p.out }

// cWriter is what a block's emitter writes through: its number in the
// evaluation order names its state (bN_...).
type cWriter struct {
	c    *cgen
	n    int
	spec *BlockSpec
}

// state names a state variable of the block.
func (w *cWriter) state(name string) string { return fmt.Sprintf("b%d_%s", w.n, name) }

// declare adds a state variable of the block.
func (w *cWriter) declare(ctype, name string) {
	fmt.Fprintf(&w.c.decl, "static %s %s;\n", ctype, w.state(name))
}

func (w *cWriter) comment(buf *bytes.Buffer) {
	fmt.Fprintf(buf, "    /* %s (%s) */\n", commentSafe(w.spec.Name), w.spec.Kind)
}

// onReset and onTick add lines (each indented by the caller's text) to the
// block's part of teeter_init and teeter_tick.
func (w *cWriter) onReset(lines ...string) { w.add(&w.c.reset, lines) }
func (w *cWriter) onTick(lines ...string)  { w.add(&w.c.tick, lines) }
func (w *cWriter) onLatch(lines ...string) { w.add(&w.c.latch, lines) }

func (w *cWriter) add(buf *bytes.Buffer, lines []string) {
	w.comment(buf)
	for _, l := range lines {
		buf.WriteString("    " + l + "\n")
	}
}

// in is input i as a teeter_real expression; raw is it as a double.
func (w *cWriter) in(p *ports, i int) string { return w.c.real(p.in[i]) }
func (w *cWriter) raw(p *ports, i int) string {
	s := p.in[i]
	if w.c.literal[s] || w.c.clockSlot[s] {
		return w.c.slot[s]
	}
	return "(double)" + w.c.slot[s]
}

func (c *cgen) real(slot int) string {
	switch {
	case c.literal[slot]:
		return "((teeter_real)" + c.slot[slot] + ")"
	case c.clockSlot[slot]:
		return "(teeter_real)" + c.slot[slot]
	}
	return c.slot[slot]
}

// out is output k of the block as an lvalue.
func (w *cWriter) out(p *ports, k int) string { return w.c.slot[p.out+k] }

// par is a parameter field as a teeter_real expression, parRaw as a double:
// par[i] for a tunable one, its value for any other.
func (w *cWriter) par(field *float64) string { return fmt.Sprintf("P(%d)", w.param(field)) }

func (w *cWriter) parRaw(field *float64) string { return fmt.Sprintf("par[%d]", w.param(field)) }

// param is the index of a block's field among the graph's parameters. Every
// number a block's tick reads is one (only select's count is not, and it is
// no field); an emitter that asks for another field is a bug, reported by
// CModule.
func (w *cWriter) param(field *float64) int {
	i, ok := w.c.paramOf[field]
	if !ok && w.c.err == nil {
		w.c.err = fmt.Errorf("C module: block %q (%s): a field the C reads is not one of the graph's parameters", w.spec.Name, w.spec.Kind)
	}
	return i
}

func (w *cWriter) clamp(x, lo, hi string) string {
	w.c.needClamp = true
	return fmt.Sprintf("clamp(%s, %s, %s)", x, lo, hi)
}

// header writes teeter_controller.h.
func (c *cgen) header() []byte {
	var b bytes.Buffer
	g, opt := c.g, c.opt
	real := "float"
	if opt.Double {
		real = "double"
	}
	b.WriteString("/* teeter_controller.h: a controller graph as C99, written by teeter; do not edit.\n *\n")
	for _, s := range [][2]string{{"Robot", opt.Robot}, {"Controller", opt.Controller}, {"Gain set", opt.Gains}} {
		if s[1] != "" {
			fmt.Fprintf(&b, " * %s: %s\n", s[0], commentSafe(s[1]))
		}
	}
	fmt.Fprintf(&b, " * Rate: %s Hz: call teeter_tick once every %s s. Parameters below are\n", formatFloat(g.rate), formatFloat(g.h))
	b.WriteString(" * the values the graph was written with, in SI units of continuous time.\n *\n")
	b.WriteString(` * Gains that work in simulation are a starting point, not a promise: bring
 * new gains up at reduced gains, with the robot tethered or on a stand, and
 * with a hardware emergency stop that cuts actuator power. Follow local
 * codes and the makers' ratings of motors, drivers and batteries.
 *
 * Use: call teeter_init once at power-on. Every period read the sensors
 * into inputs[] (SI units, in the order below), call teeter_tick, and write
 * outputs[] (commands in [-1, 1], PWM duty for a screw) to the drivers.
 * teeter_set_param and teeter_request latch their change for the next
 * tick; call them from the same context as teeter_tick, not from an
 * interrupt that can break into it. Fixed memory: no malloc, no stdio.
 */
`)
	fmt.Fprintf(&b, "#ifndef TEETER_CONTROLLER_H\n#define TEETER_CONTROLLER_H\n\n")
	fmt.Fprintf(&b, "#ifndef TEETER_REAL\n#define TEETER_REAL %s\n#endif\ntypedef TEETER_REAL teeter_real;\n\n", real)
	fmt.Fprintf(&b, "#define TEETER_RATE_HZ %s\n", cDouble(g.rate))
	fmt.Fprintf(&b, "#define TEETER_NUM_INPUTS %d\n#define TEETER_NUM_OUTPUTS %d\n#define TEETER_NUM_PARAMS %d\n\n", len(opt.Channels), len(opt.Actuators), len(c.params))
	taken := cNames{}
	b.WriteString("/* Inputs: sensor readings, SI units. */\n")
	for i, ch := range opt.Channels {
		fmt.Fprintf(&b, "#define %s %d /* %s, %s */\n", taken.take("TEETER_IN_", ch), i, commentSafe(ch), commentSafe(opt.Units[i]))
	}
	b.WriteString("\n/* Outputs: actuator commands in [-1, 1]. */\n")
	for i, a := range opt.Actuators {
		fmt.Fprintf(&b, "#define %s %d /* %s */\n", taken.take("TEETER_OUT_", a), i, commentSafe(a))
	}
	b.WriteString("\n/* Tunable parameters: index, path, value as written, unit, accepted range. */\n")
	for i, p := range c.params {
		unit := ""
		if p.Unit != "" {
			unit = " " + commentSafe(p.Unit)
		}
		fmt.Fprintf(&b, "#define %s %d /* %s = %s%s, %s .. %s */\n", taken.take("TEETER_PARAM_", p.Path), i, commentSafe(p.Path), formatFloat(p.Value), unit, formatFloat(p.Min), formatFloat(p.Max))
	}
	b.WriteString("\n")
	for _, a := range []struct{ decl, count, what string }{
		{"teeter_input_names", "TEETER_NUM_INPUTS", "sensor channel names"},
		{"teeter_input_units", "TEETER_NUM_INPUTS", "their SI units"},
		{"teeter_output_names", "TEETER_NUM_OUTPUTS", "actuator names"},
		{"teeter_param_paths", "TEETER_NUM_PARAMS", "parameter paths, \"block.param\""},
	} {
		fmt.Fprintf(&b, "extern const char *const %s[%s]; /* %s */\n", a.decl, arraySize(a.count, c.count(a.count)), a.what)
	}
	b.WriteString(`
void teeter_init(void);                    /* state as at power-on; parameters keep their values */
void teeter_tick(double now_s, const teeter_real inputs[], teeter_real outputs[]);
int teeter_request(const char *block, const char *event); /* 0, or -1 unknown */
int teeter_param_index(const char *path);                 /* index, or -1 */
teeter_real teeter_get_param(int index);                  /* the value last set; 0 for a bad index */
int teeter_set_param(int index, teeter_real value);       /* 0, or -1 bad index or value; applied at the next tick, bumpless */

#endif /* TEETER_CONTROLLER_H */
`)
	return b.Bytes()
}

func (c *cgen) count(name string) int {
	switch name {
	case "TEETER_NUM_INPUTS":
		return len(c.opt.Channels)
	case "TEETER_NUM_OUTPUTS":
		return len(c.opt.Actuators)
	}
	return len(c.params)
}

// arraySize is the size of a table of n entries: C has no empty arrays, so
// an empty table holds one null entry.
func arraySize(name string, n int) string {
	if n == 0 {
		return "1"
	}
	return name
}

func max1(n int) int { return max(n, 1) }

// source writes teeter_controller.c.
func (c *cgen) source() []byte {
	var b bytes.Buffer
	g := c.g
	nPar := len(c.params)
	b.WriteString("/* teeter_controller.c: see teeter_controller.h; written by teeter, do not edit. */\n")
	b.WriteString("#include \"teeter_controller.h\"\n#include <math.h>\n\n")
	fmt.Fprintf(&b, "#define PERIOD %s /* s */\n#define H ((teeter_real)PERIOD)\n#define P(i) ((teeter_real)par[i])\n\n", cDouble(g.h))
	c.tables(&b)
	fmt.Fprintf(&b, "static double now;\nstatic int initialised;\nstatic int pending;\n")
	fmt.Fprintf(&b, "static teeter_real sig[%d]; /* block outputs computed in teeter_real */\n", max1(c.nSig))
	if c.nClk > 0 {
		fmt.Fprintf(&b, "static double clk[%d]; /* outputs of clock-driven blocks, in double */\n", c.nClk)
	}
	if nPar > 0 {
		fmt.Fprintf(&b, "static double par[%d] = {%s}; /* parameters in force */\n", nPar, c.paramValues())
		fmt.Fprintf(&b, "static double want[%d] = {%s}; /* parameters as last set */\n", nPar, c.paramValues())
		fmt.Fprintf(&b, "static unsigned char dirty[%d];\n", nPar)
	}
	if len(c.events) > 0 {
		fmt.Fprintf(&b, "static unsigned char requested[%d];\n", len(c.events))
	}
	b.Write(c.decl.Bytes())
	b.WriteString("\n")
	if c.needClamp {
		b.WriteString("static teeter_real clamp(teeter_real x, teeter_real lo, teeter_real hi)\n{\n    return x < lo ? lo : (x > hi ? hi : x);\n}\n\n")
	}
	if nPar > 0 || len(c.events) > 0 {
		b.WriteString("static int same(const char *a, const char *b)\n{\n    while (*a != '\\0' && *a == *b) {\n        ++a;\n        ++b;\n    }\n    return *a == *b;\n}\n\n")
	}
	b.Write(c.funcs.Bytes())
	c.apply(&b)
	b.WriteString("void teeter_init(void)\n{\n    int i;\n    apply();\n")
	b.WriteString("    for (i = 0; i < (int)(sizeof sig / sizeof sig[0]); ++i)\n        sig[i] = 0;\n")
	if c.nClk > 0 {
		b.WriteString("    for (i = 0; i < (int)(sizeof clk / sizeof clk[0]); ++i)\n        clk[i] = 0;\n")
	}
	b.Write(c.reset.Bytes())
	b.WriteString("    initialised = 1;\n}\n\n")
	b.WriteString("void teeter_tick(double now_s, const teeter_real inputs[], teeter_real outputs[])\n{\n    int i;\n    (void)inputs;\n")
	b.WriteString("    if (!initialised)\n        teeter_init();\n    now = now_s;\n    if (pending)\n        apply();\n")
	b.WriteString("    for (i = 0; i < TEETER_NUM_OUTPUTS; ++i)\n        outputs[i] = 0;\n")
	b.Write(c.tick.Bytes())
	if c.latch.Len() > 0 {
		b.WriteString("    /* delays take their input for the next tick */\n")
		b.Write(c.latch.Bytes())
	}
	b.WriteString("}\n\n")
	c.api(&b)
	return b.Bytes()
}

// tables writes the name tables of the header and the parameters' bounds.
func (c *cgen) tables(b *bytes.Buffer) {
	paths := make([]string, len(c.params))
	lo, hi := make([]string, len(c.params)), make([]string, len(c.params))
	upper, lower := make([]string, len(c.params)), make([]string, len(c.params))
	for i, p := range c.params {
		paths[i], lo[i], hi[i] = p.Path, cDouble(p.Min), cDouble(p.Max)
		upper[i], lower[i] = fmt.Sprint(c.g.params[i].upper), fmt.Sprint(c.g.params[i].lower)
	}
	writeTable(b, "const char *const teeter_input_names", "TEETER_NUM_INPUTS", quoted(c.opt.Channels))
	writeTable(b, "const char *const teeter_input_units", "TEETER_NUM_INPUTS", quoted(c.opt.Units))
	writeTable(b, "const char *const teeter_output_names", "TEETER_NUM_OUTPUTS", quoted(c.opt.Actuators))
	writeTable(b, "const char *const teeter_param_paths", "TEETER_NUM_PARAMS", quoted(paths))
	if len(c.params) == 0 {
		return
	}
	b.WriteString("/* what teeter_set_param accepts: bounds, and the other limit of a limit pair */\n")
	writeTable(b, "static const double par_min", "TEETER_NUM_PARAMS", lo)
	writeTable(b, "static const double par_max", "TEETER_NUM_PARAMS", hi)
	writeTable(b, "static const int par_at_most", "TEETER_NUM_PARAMS", upper)
	writeTable(b, "static const int par_at_least", "TEETER_NUM_PARAMS", lower)
}

func quoted(xs []string) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = cString(x)
	}
	return out
}

func writeTable(b *bytes.Buffer, decl, count string, items []string) {
	if len(items) == 0 {
		fmt.Fprintf(b, "%s[1] = {0};\n\n", decl)
		return
	}
	fmt.Fprintf(b, "%s[%s] = {\n", decl, count)
	for _, it := range items {
		fmt.Fprintf(b, "    %s,\n", it)
	}
	b.WriteString("};\n\n")
}

func (c *cgen) paramValues() string {
	vals := make([]string, len(c.params))
	for i, p := range c.params {
		vals[i] = cDouble(p.Value)
	}
	return strings.Join(vals, ", ")
}

// apply writes apply(), which brings latched parameter changes and event
// requests into the blocks at the start of a tick, as Graph.applyLocked.
func (c *cgen) apply(b *bytes.Buffer) {
	b.WriteString("static void apply(void)\n{\n")
	if len(c.params) > 0 {
		b.WriteString("    int i;\n    for (i = 0; i < TEETER_NUM_PARAMS; ++i) {\n        if (!dirty[i])\n            continue;\n")
		if len(c.retune) > 0 {
			b.WriteString("        switch (i) {\n")
			for i := range c.params {
				code, ok := c.retune[i]
				if !ok {
					continue
				}
				fmt.Fprintf(b, "        case %d:\n", i)
				if next, more := c.retune[i+1]; !more || next != code {
					fmt.Fprintf(b, "            %s\n            break;\n", code)
				}
			}
			b.WriteString("        default:\n            break;\n        }\n")
		}
		b.WriteString("        par[i] = want[i];\n        dirty[i] = 0;\n    }\n")
	}
	for i, e := range c.events {
		fmt.Fprintf(b, "    if (requested[%d]) {\n        %s = 1;\n        requested[%d] = 0;\n    }\n", i, e.latched, i)
	}
	b.WriteString("    pending = 0;\n}\n\n")
}

// api writes the request and parameter functions.
func (c *cgen) api(b *bytes.Buffer) {
	b.WriteString("int teeter_request(const char *block, const char *event)\n{\n")
	if len(c.events) == 0 {
		b.WriteString("    (void)block;\n    (void)event;\n")
	}
	for i, e := range c.events {
		fmt.Fprintf(b, "    if (same(block, %s) && same(event, %s)) {\n        requested[%d] = 1;\n        pending = 1;\n        return 0;\n    }\n", cString(e.block), cString(e.event), i)
	}
	b.WriteString("    return -1;\n}\n\n")
	if len(c.params) == 0 {
		b.WriteString(`int teeter_param_index(const char *path)
{
    (void)path;
    return -1;
}

teeter_real teeter_get_param(int index)
{
    (void)index;
    return 0;
}

int teeter_set_param(int index, teeter_real value)
{
    (void)index;
    (void)value;
    return -1;
}
`)
		return
	}
	b.WriteString(`int teeter_param_index(const char *path)
{
    int i;
    for (i = 0; i < TEETER_NUM_PARAMS; ++i)
        if (same(path, teeter_param_paths[i]))
            return i;
    return -1;
}

teeter_real teeter_get_param(int index)
{
    if (index < 0 || index >= TEETER_NUM_PARAMS)
        return 0;
    return (teeter_real)want[index];
}

int teeter_set_param(int index, teeter_real value)
{
    double v = (double)value;
    int j;
    if (index < 0 || index >= TEETER_NUM_PARAMS)
        return -1;
    if (!isfinite(v) || v < par_min[index] || v > par_max[index])
        return -1;
    j = par_at_most[index];
    if (j >= 0 && v > want[j])
        return -1;
    j = par_at_least[index];
    if (j >= 0 && v < want[j])
        return -1;
    want[index] = v;
    dirty[index] = 1;
    pending = 1;
    return 0;
}
`)
}
