package control

import (
	"fmt"
	"strings"
)

// The C of each block kind, beside nothing but itself: each mirrors the
// kind's reset and tick in kinds.go, pid.go and sequencer.go expression for
// expression, so that with teeter_real double the C gives the Go graph's
// numbers to the last bit or two. Blocks that read the clock compute in
// double (see cBlock.cClock); the rest in teeter_real.

func (s *sensorBlock) cClock() bool { return false }
func (s *sensorBlock) cEmit(w *cWriter) {
	w.onReset(w.out(&s.ports, 0) + " = 0;")
	w.onTick(fmt.Sprintf("%s = inputs[%d];", w.out(&s.ports, 0), s.channel))
}

func (k *constantBlock) cClock() bool { return false }
func (k *constantBlock) cEmit(w *cWriter) {
	line := fmt.Sprintf("%s = %s;", w.out(&k.ports, 0), w.par(&k.value))
	w.onReset(line)
	w.onTick(line)
}

func (k *timeBlock) cClock() bool { return true }
func (k *timeBlock) cEmit(w *cWriter) {
	w.onReset(w.out(&k.ports, 0) + " = 0;")
	w.onTick(w.out(&k.ports, 0) + " = now;")
}

func (k *stepBlock) cClock() bool { return true }
func (k *stepBlock) cEmit(w *cWriter) {
	out := w.out(&k.ports, 0)
	w.onReset(fmt.Sprintf("%s = %s;", out, w.parRaw(&k.before)))
	w.onTick(fmt.Sprintf("%s = now >= %s ? %s : %s;", out, w.parRaw(&k.at), w.parRaw(&k.after), w.parRaw(&k.before)))
}

func (k *rampBlock) cClock() bool { return true }
func (k *rampBlock) cEmit(w *cWriter) {
	out := w.out(&k.ports, 0)
	w.onReset(fmt.Sprintf("%s = %s;", out, w.parRaw(&k.offset)))
	// max(0, d) as Go's math.Max: +0 for a negative or zero d, NaN kept.
	w.onTick("{",
		fmt.Sprintf("    double d = now - %s;", w.parRaw(&k.start)),
		"    if (!(d > 0) && d == d)",
		"        d = 0;",
		fmt.Sprintf("    %s = %s + %s * d;", out, w.parRaw(&k.offset), w.parRaw(&k.slope)),
		"}")
}

// twoPi is 2*math.Pi as Go rounds it to a float64.
const twoPi = "6.283185307179586"

func (k *sineBlock) cClock() bool { return true }
func (k *sineBlock) cEmit(w *cWriter) {
	out, amp, off := w.out(&k.ports, 0), w.parRaw(&k.amplitude), w.parRaw(&k.offset)
	w.onReset(fmt.Sprintf("%s = %s + %s * sin(%s);", out, off, amp, w.parRaw(&k.phase)))
	w.onTick(fmt.Sprintf("%s = %s + %s * sin(%s * %s * now + %s);", out, off, amp, twoPi, w.parRaw(&k.frequency), w.parRaw(&k.phase)))
}

func (k *squareBlock) cClock() bool { return true }
func (k *squareBlock) cEmit(w *cWriter) {
	out, amp, off := w.out(&k.ports, 0), w.parRaw(&k.amplitude), w.parRaw(&k.offset)
	w.onReset(fmt.Sprintf("%s = %s + %s;", out, off, amp))
	w.onTick("{",
		"    double whole;",
		fmt.Sprintf("    double frac = modf(%s * now, &whole);", w.parRaw(&k.frequency)),
		"    if (frac < 0)",
		"        frac += 1;",
		fmt.Sprintf("    %s = frac < %s ? %s + %s : %s - %s;", out, w.parRaw(&k.duty), off, amp, off, amp),
		"}")
}

func (k *gainBlock) cClock() bool { return false }
func (k *gainBlock) cEmit(w *cWriter) {
	w.onReset(w.out(&k.ports, 0) + " = 0;")
	w.onTick(fmt.Sprintf("%s = %s * %s;", w.out(&k.ports, 0), w.par(&k.k), w.in(&k.ports, 0)))
}

func (k *sumBlock) cClock() bool { return false }
func (k *sumBlock) cEmit(w *cWriter) {
	w.onReset(w.out(&k.ports, 0) + " = 0;")
	lines := []string{"{", "    teeter_real s = 0;"}
	for i, sign := range k.signs {
		op := "+="
		if sign < 0 {
			op = "-="
		}
		lines = append(lines, fmt.Sprintf("    s %s %s;", op, w.in(&k.ports, i)))
	}
	w.onTick(append(lines, fmt.Sprintf("    %s = s;", w.out(&k.ports, 0)), "}")...)
}

func (k *splitBlock) cClock() bool { return false }
func (k *splitBlock) cEmit(w *cWriter) {
	var reset []string
	lines := []string{"{", fmt.Sprintf("    const teeter_real x = %s;", w.in(&k.ports, 0))}
	for i := range k.gains {
		reset = append(reset, w.out(&k.ports, i)+" = 0;")
		lines = append(lines, fmt.Sprintf("    %s = %s * x;", w.out(&k.ports, i), w.par(&k.gains[i])))
	}
	w.onReset(reset...)
	w.onTick(append(lines, "}")...)
}

func (k *limitBlock) cClock() bool { return false }
func (k *limitBlock) cEmit(w *cWriter) {
	out, lo, hi := w.out(&k.ports, 0), w.par(&k.lo), w.par(&k.hi)
	w.onReset(fmt.Sprintf("%s = %s;", out, w.clamp("0", lo, hi)))
	w.onTick(fmt.Sprintf("%s = %s;", out, w.clamp(w.in(&k.ports, 0), lo, hi)))
}

// startsAtInput writes the shared start of a filter: on the first tick
// after a reset the output takes the input x; the filter's own step runs
// on the later ticks.
func (k *startsAtInput) cEmit(w *cWriter, x string, step ...string) {
	started, out := w.state("started"), w.out(&k.ports, 0)
	w.declare("unsigned char", "started")
	w.onReset(out+" = 0;", started+" = 0;")
	lines := []string{"{", "    const teeter_real x = " + x + ";", "    if (!" + started + ") {", "        " + out + " = x;", "        " + started + " = 1;", "    } else {"}
	for _, s := range step {
		lines = append(lines, "        "+s)
	}
	w.onTick(append(lines, "    }", "}")...)
}

func (k *rateLimitBlock) cClock() bool { return false }
func (k *rateLimitBlock) cEmit(w *cWriter) {
	out := w.out(&k.ports, 0)
	k.startsAtInput.cEmit(w, w.in(&k.ports, 0),
		fmt.Sprintf("const teeter_real step = %s * H;", w.par(&k.rate)),
		fmt.Sprintf("const teeter_real y = %s;", out),
		fmt.Sprintf("%s = %s;", out, w.clamp("x", "y - step", "y + step")))
}

func (k *lowpassBlock) cClock() bool { return false }
func (k *lowpassBlock) cEmit(w *cWriter) {
	out, tau := w.out(&k.ports, 0), w.par(&k.tau)
	k.startsAtInput.cEmit(w, w.in(&k.ports, 0),
		fmt.Sprintf("if (%s <= 0) {", tau),
		"    "+out+" = x;",
		"} else {",
		fmt.Sprintf("    const teeter_real a = (teeter_real)exp(-PERIOD / (double)%s);", tau),
		fmt.Sprintf("    %s = a * %s + (1 - a) * x;", out, out),
		"}")
}

func (k *deadbandBlock) cClock() bool { return false }
func (k *deadbandBlock) cEmit(w *cWriter) {
	out, band := w.out(&k.ports, 0), w.par(&k.band)
	w.onReset(out + " = 0;")
	w.onTick("{",
		"    const teeter_real x = "+w.in(&k.ports, 0)+";",
		fmt.Sprintf("    if (x > %s)", band),
		fmt.Sprintf("        %s = x - %s;", out, band),
		fmt.Sprintf("    else if (x < -%s)", band),
		fmt.Sprintf("        %s = x + %s;", out, band),
		"    else",
		"        "+out+" = 0;",
		"}")
}

func (k *tiltFilterBlock) cClock() bool { return false }
func (k *tiltFilterBlock) cEmit(w *cWriter) {
	out, tau := w.out(&k.ports, 0), w.par(&k.tau)
	// x is the angle, the filter's start; the rate is read beside it.
	k.startsAtInput.cEmit(w, w.in(&k.ports, 1),
		fmt.Sprintf("const teeter_real rate = %s;", w.in(&k.ports, 0)),
		fmt.Sprintf("const teeter_real a = %s / (%s + H);", tau, tau),
		fmt.Sprintf("%s = a * (%s + H * rate) + (1 - a) * x;", out, out))
}

func (k *delayBlock) cClock() bool { return false }
func (k *delayBlock) cEmit(w *cWriter) {
	w.onReset(fmt.Sprintf("%s = %s;", w.out(&k.ports, 0), w.par(&k.initial)))
	w.onLatch(fmt.Sprintf("%s = %s;", w.out(&k.ports, 0), w.in(&k.ports, 0)))
}

func (k *selectBlock) cClock() bool { return false }
func (k *selectBlock) cEmit(w *cWriter) {
	n := len(k.in) - 1
	out := w.out(&k.ports, 0)
	index := w.parRaw(&k.index)
	if k.in[n] >= 0 {
		index = w.raw(&k.ports, n)
	}
	w.onReset(out + " = 0;")
	// The index is rounded in double, as in Go; a NaN index, on which the
	// Go graph fails, takes input 1.
	lines := []string{"{",
		"    double index = " + index + ";",
		fmt.Sprintf("    index = index < 1 ? 1 : (index > %d ? %d : index);", n, n),
		"    if (index != index)",
		"        index = 1;",
		"    switch ((int)round(index)) {"}
	for i := 0; i < n; i++ {
		label := fmt.Sprintf("case %d:", i+1)
		if i == n-1 {
			label = "default:"
		}
		lines = append(lines, "    "+label, fmt.Sprintf("        %s = %s;", out, w.in(&k.ports, i)), "        break;")
	}
	w.onTick(append(lines, "    }", "}")...)
}

func (k *actuatorBlock) cClock() bool { return false }
func (k *actuatorBlock) cEmit(w *cWriter) {
	out := w.out(&k.ports, 0)
	w.onReset(out + " = 0;")
	w.onTick("{",
		"    teeter_real u = "+w.in(&k.ports, 0)+";",
		"    if (u != u)",
		"        u = 0; /* a NaN command stops the actuator */",
		"    u = "+w.clamp("u", "-1", "1")+";",
		"    "+out+" = u;",
		fmt.Sprintf("    outputs[%d] = u;", k.actuator),
		"}")
}

func (p *pidBlock) cClock() bool { return false }
func (p *pidBlock) cEmit(w *cWriter) {
	p.cState(w)
	kp, b := w.par(&p.kp), w.par(&p.b)
	p.cRetune(w, kp, b)
	st := func(name string) string { return w.state(name) }
	lines := []string{"{",
		fmt.Sprintf("    const teeter_real r = %s, y = %s;", w.in(&p.ports, 0), w.in(&p.ports, 1)),
		fmt.Sprintf("    const teeter_real kp = %s, ki = %s, kd = %s, b = %s;", kp, w.par(&p.ki), w.par(&p.kd), b),
		"    teeter_real tf, prop, v, u, e;",
		fmt.Sprintf("    if (!%s) {", st("started")),
		fmt.Sprintf("        %s = y;", st("last_y")),
		fmt.Sprintf("        %s = 1;", st("started")),
		fmt.Sprintf("        %s = 0;", st("retune")),
		"    }",
		fmt.Sprintf("    if (%s) {", st("retune")),
		fmt.Sprintf("        %s += %s * (%s * r - y) - kp * (b * r - y);", st("integral"), st("old_kp"), st("old_b")),
		fmt.Sprintf("        %s = 0;", st("retune")),
		"    }",
	}
	if p.useN {
		n := w.par(&p.n)
		lines = append(lines, fmt.Sprintf("    tf = (kp <= 0 || %s <= 0) ? 0 : kd / (kp * %s);", n, n))
	} else {
		lines = append(lines, fmt.Sprintf("    tf = %s;", w.par(&p.tf)))
	}
	d, i := st("deriv"), st("integral")
	lines = append(lines,
		fmt.Sprintf("    %s = (tf * %s - kd * (y - %s)) / (tf + H);", d, d, st("last_y")),
		"    prop = kp * (b * r - y);",
		fmt.Sprintf("    if (%s < 0.5) { /* off: outputs 0; with ki, the integral tracks for a bumpless start */", w.par(&p.on)),
		fmt.Sprintf("        if (ki > 0) %s = -(prop + %s);", i, d),
		fmt.Sprintf("        %s = 0; %s = 0; %s = 0; %s = 0;", w.out(&p.ports, 0), w.out(&p.ports, 1), w.out(&p.ports, 2), w.out(&p.ports, 3)),
		fmt.Sprintf("        %s = y;", st("last_y")),
		"    } else {",
		fmt.Sprintf("    v = prop + %s + %s;", i, d),
		"    u = v;")
	var lo, hi string
	if p.limited {
		lo, hi = w.par(&p.lo), w.par(&p.hi)
		lines = append(lines, "    u = "+w.clamp("v", lo, hi)+";")
	}
	lines = append(lines, "    e = r - y;")
	for k, x := range []string{"u", "prop", i, d} {
		lines = append(lines, fmt.Sprintf("    %s = %s;", w.out(&p.ports, k), x))
	}
	lines = append(lines, p.cIntegrate(w, i, lo, hi)...)
	lines = append(lines, fmt.Sprintf("    %s = y;", st("last_y")), "    }", "}")
	w.onTick(lines...)
}

// cState declares the PID's state and resets it with the outputs.
func (p *pidBlock) cState(w *cWriter) {
	for _, v := range []string{"integral", "deriv", "last_y", "old_kp", "old_b"} {
		w.declare("teeter_real", v)
	}
	w.declare("unsigned char", "started")
	w.declare("unsigned char", "retune")
	reset := []string{}
	for _, v := range []string{"integral", "deriv", "last_y", "started", "retune"} {
		reset = append(reset, w.state(v)+" = 0;")
	}
	for i := 0; i < 4; i++ {
		reset = append(reset, w.out(&p.ports, i)+" = 0;")
	}
	w.onReset(reset...)
}

// cRetune keeps, before a tick's first change of any of the PID's
// parameters, the gains in force (kp and b), so the tick moves the
// integral for a bumpless change.
func (p *pidBlock) cRetune(w *cWriter, kp, b string) {
	st := func(name string) string { return w.state(name) }
	retune := fmt.Sprintf("if (!%s) { %s = 1; %s = %s; %s = %s; }", st("retune"), st("retune"), st("old_kp"), kp, st("old_b"), b)
	for i := range w.c.g.params {
		if w.c.g.params[i].owner == block(p) {
			w.c.retune[i] = retune
		}
	}
}

// cIntegrate is the integral's update by the error e, with the PID's
// anti-windup between lo and hi when it is limited.
func (p *pidBlock) cIntegrate(w *cWriter, i, lo, hi string) []string {
	switch {
	case !p.limited || p.windup == windupNone:
		return []string{fmt.Sprintf("    %s += ki * H * e;", i)}
	case p.windup == windupConditional:
		return []string{
			"    /* hold the integral while saturated and the error drives further in */",
			fmt.Sprintf("    if (!(v > %s && e > 0) && !(v < %s && e < 0))", hi, lo),
			fmt.Sprintf("        %s += ki * H * e;", i)}
	default:
		return []string{
			"    {",
			"        /* back-calculation: tracking time tt, else sqrt(Ti*Td) or Ti/2, at least a tick */",
			"        teeter_real tt = " + w.par(&p.tt) + ";",
			"        if (tt <= 0) {",
			"            if (ki <= 0) {",
			"                tt = H;",
			"            } else if (kp <= 0) {",
			"                tt = 1 / ki;",
			"            } else {",
			"                const teeter_real ti = kp / ki, td = kd / kp;",
			"                tt = td > 0 ? (teeter_real)sqrt((double)(ti * td)) : ti / 2;",
			"            }",
			"        }",
			"        if (tt < H)",
			"            tt = H;",
			fmt.Sprintf("        %s += ki * H * e + H / tt * (u - v);", i),
			"    }"}
	}
}

// The sequencer runs in double: its outputs are ramps in time, so they
// match the Go graph's to the bit and a select on one switches on the same
// tick.
func (s *sequencerBlock) cClock() bool { return true }
func (s *sequencerBlock) cEmit(w *cWriter) {
	state, entered, started := w.state("state"), w.state("entered"), w.state("started")
	w.declare("int", "state")
	w.declare("double", "entered")
	w.declare("unsigned char", "started")
	fmt.Fprintf(&w.c.decl, "static double %s[%d];\n", w.state("from"), max1(s.nOut))
	latched := w.state("latched")
	if len(s.events) > 0 {
		fmt.Fprintf(&w.c.decl, "static unsigned char %s[%d];\n", latched, len(s.events))
		for i, e := range s.events {
			w.c.events = append(w.c.events, cEvent{block: s.name, event: e, latched: fmt.Sprintf("%s[%d]", latched, i)})
		}
	}
	s.cEnterAndDrive(w)

	reset := []string{state + " = 0;", started + " = 0;"}
	for i := range s.events {
		reset = append(reset, fmt.Sprintf("%s[%d] = 0;", latched, i))
	}
	for k := 0; k <= s.nOut; k++ {
		reset = append(reset, w.out(&s.ports, k)+" = 0;")
	}
	w.onReset(append(reset, fmt.Sprintf("b%d_enter(0);", w.n), fmt.Sprintf("b%d_drive();", w.n))...)

	tick := []string{fmt.Sprintf("if (!%s) {", started), fmt.Sprintf("    %s = 1;", started), fmt.Sprintf("    %s = now;", entered), "}"}
	if trans, needElapsed := s.cTransitions(w); len(trans) > 0 {
		tick = append(tick, "{")
		if needElapsed {
			tick = append(tick, fmt.Sprintf("    const double elapsed = now - %s;", entered))
		}
		tick = append(tick, fmt.Sprintf("    switch (%s) {", state))
		tick = append(tick, trans...)
		tick = append(tick, "    default:", "        break;", "    }", "}")
	}
	w.onTick(append(tick, fmt.Sprintf("b%d_drive();", w.n))...)
}

// cEnterAndDrive writes the sequencer's two functions: bN_enter enters a
// state, keeping the outputs its ramps start from; bN_drive sets the
// outputs the state in force sets, ramped.
func (s *sequencerBlock) cEnterAndDrive(w *cWriter) {
	state, entered, from := w.state("state"), w.state("entered"), w.state("from")
	out := func(k int) string { return w.out(&s.ports, k) }
	f := &w.c.funcs
	fmt.Fprintf(f, "/* %s (sequencer): states", commentSafe(s.name))
	for i := range s.states {
		fmt.Fprintf(f, " %d %s", i, commentSafe(w.spec.Sequence.States[i].Name))
	}
	f.WriteString(" */\n")
	fmt.Fprintf(f, "static void b%d_enter(int to)\n{\n    int i;\n    %s = to;\n    %s = now;\n", w.n, state, entered)
	fmt.Fprintf(f, "    for (i = 0; i < %d; ++i)\n        %s[i] = %s;\n", s.nOut, from, strings.Replace(out(0), "[", "[i + ", 1))
	fmt.Fprintf(f, "    %s = (double)(to + 1);\n}\n\n", out(s.nOut))

	fmt.Fprintf(f, "static void b%d_drive(void)\n{\n", w.n)
	var cases []string
	for i := range s.states {
		st := &s.states[i]
		if len(st.outputs) == 0 {
			continue
		}
		cases = append(cases, fmt.Sprintf("    case %d:", i))
		ramp := w.parRaw(&st.ramp)
		for j, o := range st.outputs {
			cases = append(cases,
				"        {",
				"            double target = "+w.parRaw(&st.values[j])+";",
				fmt.Sprintf("            if (%s > 0 && elapsed < %s)", ramp, ramp),
				fmt.Sprintf("                target = %s[%d] + (target - %s[%d]) * elapsed / %s;", from, o, from, o, ramp),
				fmt.Sprintf("            %s = target;", out(o)),
				"        }")
		}
		cases = append(cases, "        break;")
	}
	if len(cases) > 0 {
		fmt.Fprintf(f, "    const double elapsed = now - %s;\n    switch (%s) {\n", entered, state)
		for _, l := range cases {
			f.WriteString(l + "\n")
		}
		f.WriteString("    default:\n        break;\n    }\n")
	}
	f.WriteString("}\n\n")
}

// cTransitions are the cases of the tick's switch on the state, one per
// state that can leave; needElapsed says whether one reads the time in the
// state.
func (s *sequencerBlock) cTransitions(w *cWriter) (trans []string, needElapsed bool) {
	latched := w.state("latched")
	for i := range s.states {
		st := &s.states[i]
		if len(st.next) == 0 {
			continue
		}
		trans = append(trans, fmt.Sprintf("    case %d:", i))
		for k := range st.next {
			t := &st.next[k]
			var cond, consume string
			switch {
			case t.event >= 0:
				cond = fmt.Sprintf("%s[%d]", latched, t.event)
				if slot := s.in[s.nSignal+t.event]; slot >= 0 {
					cond = fmt.Sprintf("(%s || %s > 0.5)", cond, w.raw(&s.ports, s.nSignal+t.event))
				}
				consume = fmt.Sprintf("%s[%d] = 0; ", latched, t.event)
			case t.after:
				cond, needElapsed = "elapsed >= "+w.parRaw(&t.threshold), true
			case t.signal >= 0:
				op := "<"
				if t.above {
					op = ">"
				}
				cond = fmt.Sprintf("%s %s %s", w.raw(&s.ports, t.signal), op, w.parRaw(&t.threshold))
			}
			keyword := "if"
			if k > 0 {
				keyword = "else if"
			}
			trans = append(trans, fmt.Sprintf("        %s (%s) {", keyword, cond),
				fmt.Sprintf("            %sb%d_enter(%d);", consume, w.n, t.to), "        }")
		}
		trans = append(trans, "        break;")
	}
	return trans, needElapsed
}
