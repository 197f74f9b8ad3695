package control

import (
	"fmt"
	"slices"
	"strings"

	"teeter/models"
)

// Sequence is the file form of a sequencer block: named states, each setting
// some outputs (ramping to them if it has a ramp time) and leaving the rest
// where they are, and the transitions out of each state.
type Sequence struct {
	Signals []string // inputs that transitions compare with thresholds
	Events  []string // event inputs, also settable as latched requests
	States  []State
}

// State is one state of a sequencer. Its numbers are block parameters:
// "STATE.OUTPUT" for each output it sets and "STATE.ramp".
type State struct {
	Name string
	Pos  models.Pos
	Set  []string // outputs this state sets
	Next []Transition
}

// Transition leaves a state on exactly one condition: an event (On), time
// in the state (After, parameter "STATE.nextK.after"), or a signal crossing
// a threshold (When, parameter "STATE.nextK.above" or "STATE.nextK.below"),
// K counting the state's transitions from 1.
type Transition struct {
	To    string
	On    string
	After bool
	When  string
	Above bool
	Pos   models.Pos
	index int // place in the file's list, for messages
}

func parseSequencer(r *reader) {
	seq := &Sequence{}
	r.b.Sequence = seq
	outs, outPos := r.nameList("outputs", true)
	for i, o := range outs {
		if o == "state" || o == "ramp" || strings.HasPrefix(o, "next") {
			r.add(outPos[i], "outputs", "output name %q is reserved", o)
			continue
		}
		r.outputs(o)
	}
	r.outputs("state")
	seq.Signals, _ = r.nameList("signals", false)
	seq.Events, _ = r.nameList("events", false)
	for _, e := range seq.Events {
		if slices.Contains(seq.Signals, e) {
			r.add(r.pos, "events", "%q is both a signal and an event", e)
		}
	}
	r.inputs(seq.Signals...)
	r.optionalInputs(seq.Events...)
	f := r.field("states")
	if f == nil {
		r.add(r.pos, "states", "missing: a sequencer needs a list of states")
		return
	}
	if f.Value.Kind != models.List || len(f.Value.Items) == 0 {
		r.add(f.Value.Pos, "states", "states is a list of at least one state")
		return
	}
	first := map[string]models.Pos{}
	for i := range f.Value.Items {
		st, ok := parseState(r, seq, &f.Value.Items[i], i)
		if !ok {
			continue
		}
		if p, dup := first[st.Name]; dup {
			r.add(st.Pos, "states."+st.Name, "duplicate state name %q (first used at line %d)", st.Name, p.Line)
			continue
		}
		first[st.Name] = st.Pos
		seq.States = append(seq.States, st)
	}
	for _, st := range seq.States {
		for _, t := range st.Next {
			if _, ok := first[t.To]; t.To != "" && !ok {
				r.add(t.Pos, fmt.Sprintf("states.%s.next[%d].to", st.Name, t.index), "no state named %q", t.To)
			}
		}
	}
}

func parseState(r *reader, seq *Sequence, v *models.Value, index int) (State, bool) {
	st := State{Pos: mapPos(v)}
	where := fmt.Sprintf("states[%d]", index)
	if v.Kind != models.Map {
		r.add(v.Pos, where, "a state is a mapping with name, set, ramp and next")
		return st, false
	}
	nf, ok := v.Get("name")
	if !ok || nf.Value.Kind != models.Scalar || !validName(nf.Value.Text) {
		r.add(st.Pos, where+".name", "a state needs a name that is %s", nameRule)
		return st, false
	}
	st.Name = nf.Value.Text
	where = "states." + st.Name
	ramp := Param{Name: st.Name + ".ramp", Unit: "s", Tunable: true, Max: inf, Pos: st.Pos}
	for i := range v.Fields {
		f := &v.Fields[i]
		switch f.Key {
		case "name":
		case "set":
			if f.Value.Kind != models.Map {
				r.add(f.Value.Pos, where+".set", "set is a mapping of output to value")
				continue
			}
			for j := range f.Value.Fields {
				of := &f.Value.Fields[j]
				if !slices.Contains(r.b.Outputs[:len(r.b.Outputs)-1], of.Key) {
					r.add(of.KeyPos, where+".set."+of.Key, "%q is not an output of this sequencer (outputs: %s)", of.Key, strings.Join(r.b.Outputs[:len(r.b.Outputs)-1], ", "))
					continue
				}
				x, unit, err := parseNumber(&of.Value, mSignal)
				if err != nil {
					r.add(of.Value.Pos, where+".set."+of.Key, "%v", err)
					continue
				}
				st.Set = append(st.Set, of.Key)
				r.b.Params = append(r.b.Params, Param{Name: st.Name + "." + of.Key, Value: x, Unit: unit, Tunable: true, Min: -inf, Max: inf, Pos: of.Value.Pos})
			}
		case "ramp":
			x, _, err := parseNumber(&f.Value, mDuration)
			if err != nil || x < 0 {
				r.add(f.Value.Pos, where+".ramp", "ramp is a time of 0 s or more")
				continue
			}
			ramp.Value, ramp.Pos = x, f.Value.Pos
		case "next":
			if f.Value.Kind != models.List {
				r.add(f.Value.Pos, where+".next", "next is a list of transitions")
				continue
			}
			for k := range f.Value.Items {
				if t, ok := parseTransition(r, seq, &st, &f.Value.Items[k], k); ok {
					st.Next = append(st.Next, t)
				}
			}
		default:
			r.add(f.KeyPos, where+"."+f.Key, "unknown field %q in a state (it has name, set, ramp, next)", f.Key)
		}
	}
	r.b.Params = append(r.b.Params, ramp)
	return st, true
}

func parseTransition(r *reader, seq *Sequence, st *State, v *models.Value, k int) (Transition, bool) {
	t := Transition{Pos: mapPos(v), index: k}
	where := fmt.Sprintf("states.%s.next[%d]", st.Name, k)
	if v.Kind != models.Map {
		r.add(v.Pos, where, "a transition is a mapping such as {after: 1 s, to: NAME}")
		return t, false
	}
	prefix := fmt.Sprintf("%s.next%d.", st.Name, len(st.Next)+1)
	conditions := 0
	var threshold *models.Field
	for i := range v.Fields {
		f := &v.Fields[i]
		text := f.Value.Text
		switch f.Key {
		case "to":
			t.To = text
		case "on":
			conditions++
			if !listed(r, f, where, "an event", "events", seq.Events) {
				return t, false
			}
			t.On = text
		case "after":
			conditions++
			x, _, err := parseNumber(&f.Value, mDuration)
			if err != nil || x < 0 {
				r.add(f.Value.Pos, where+".after", "after is a time of 0 s or more")
				return t, false
			}
			t.After = true
			r.b.Params = append(r.b.Params, Param{Name: prefix + "after", Value: x, Unit: "s", Tunable: true, Max: inf, Pos: f.Value.Pos})
		case "when":
			conditions++
			if !listed(r, f, where, "a signal", "signals", seq.Signals) {
				return t, false
			}
			t.When = text
		case "above", "below":
			if threshold != nil {
				r.add(f.KeyPos, where+"."+f.Key, "give one of above and below")
				return t, false
			}
			threshold = f
		default:
			r.add(f.KeyPos, where+"."+f.Key, "unknown field %q in a transition (it has to and one of on, after, when with above or below)", f.Key)
			return t, false
		}
	}
	switch {
	case t.To == "":
		r.add(t.Pos, where+".to", "missing: the state to go to")
		return t, false
	case conditions != 1:
		r.add(t.Pos, where, "a transition has exactly one of on, after and when")
		return t, false
	case (t.When != "") != (threshold != nil):
		r.add(t.Pos, where, "when goes with above or below, and they only with when")
		return t, false
	}
	if threshold != nil {
		x, unit, err := parseNumber(&threshold.Value, mSignal)
		if err != nil {
			r.add(threshold.Value.Pos, where+"."+threshold.Key, "%v", err)
			return t, false
		}
		t.Above = threshold.Key == "above"
		r.b.Params = append(r.b.Params, Param{Name: prefix + threshold.Key, Value: x, Unit: unit, Tunable: true, Min: -inf, Max: inf, Pos: threshold.Value.Pos})
	}
	return t, true
}

// listed reports whether a transition's field names one of the sequencer's
// events or signals (names), and says what it has when not.
func listed(r *reader, f *models.Field, where, one, all string, names []string) bool {
	if slices.Contains(names, f.Value.Text) {
		return true
	}
	r.add(f.Value.Pos, where+"."+f.Key, "%q is not %s of this sequencer (%s: %s)", f.Value.Text, one, all, strings.Join(names, ", "))
	return false
}

// sequencerBlock runs a Sequence. Each tick it first takes at most one
// transition out of the current state (the first in file order whose
// condition holds), then drives the outputs the state sets, ramping linearly
// from where they were on entry. An event is present while its input is
// above 0.5 or while a request for it is latched; a latched request waits
// until a state with a transition on it consumes it, so a stop can wait for
// a safe phase.
type sequencerBlock struct {
	ports
	name    string
	nOut    int
	nSignal int
	states  []seqState
	events  []string

	current int
	entered float64
	started bool
	from    []float64
	latched []bool
}

type seqState struct {
	outputs []int     // output index of each value set
	values  []float64 // tunable
	ramp    float64
	next    []seqTransition
}

type seqTransition struct {
	to        int
	event     int // -1 unless on an event
	signal    int // -1 unless on a threshold
	above     bool
	after     bool
	threshold float64 // time or level
}

func buildSequencer(b *BlockSpec, c *buildContext) block {
	seq := b.Sequence
	s := &sequencerBlock{ports: c.ports(), name: b.Name, nOut: len(b.Outputs) - 1, nSignal: len(seq.Signals), events: seq.Events}
	s.from = make([]float64, s.nOut)
	s.latched = make([]bool, len(seq.Events))
	stateIndex := func(name string) int {
		for i, st := range seq.States {
			if st.Name == name {
				return i
			}
		}
		return -1
	}
	s.states = make([]seqState, len(seq.States))
	for i, st := range seq.States {
		ss := &s.states[i]
		ss.values = make([]float64, len(st.Set))
		for j, o := range st.Set {
			ss.outputs = append(ss.outputs, slices.Index(b.Outputs, o))
			c.bind(b, st.Name+"."+o, &ss.values[j])
		}
		c.bind(b, st.Name+".ramp", &ss.ramp)
		ss.next = make([]seqTransition, len(st.Next))
		for k, t := range st.Next {
			tr := &ss.next[k]
			tr.to, tr.event, tr.signal, tr.above, tr.after = stateIndex(t.To), slices.Index(seq.Events, t.On), slices.Index(seq.Signals, t.When), t.Above, t.After
			prefix := fmt.Sprintf("%s.next%d.", st.Name, k+1)
			switch {
			case t.After:
				c.bind(b, prefix+"after", &tr.threshold)
			case t.When != "" && t.Above:
				c.bind(b, prefix+"above", &tr.threshold)
			case t.When != "":
				c.bind(b, prefix+"below", &tr.threshold)
			}
		}
	}
	c.sequencers[b.Name] = s
	return s
}

func (s *sequencerBlock) reset(g *Graph) {
	s.current, s.started = 0, false
	for i := range s.latched {
		s.latched[i] = false
	}
	for i := 0; i <= s.nOut; i++ {
		g.vals[s.out+i] = 0
	}
	s.enter(g, 0)
	s.drive(g)
}

func (s *sequencerBlock) stateLen() int { return 3 + s.nOut + len(s.latched) }
func (s *sequencerBlock) saveState(dst []float64) {
	dst[0], dst[1], dst[2] = float64(s.current), s.entered, flag(s.started)
	copy(dst[3:], s.from)
	for i, l := range s.latched {
		dst[3+s.nOut+i] = flag(l)
	}
}
func (s *sequencerBlock) loadState(src []float64) {
	s.current, s.entered, s.started = int(src[0]), src[1], isSet(src[2])
	copy(s.from, src[3:3+s.nOut])
	for i := range s.latched {
		s.latched[i] = isSet(src[3+s.nOut+i])
	}
}

func (s *sequencerBlock) enter(g *Graph, state int) {
	s.current, s.entered = state, g.now
	copy(s.from, g.vals[s.out:s.out+s.nOut])
	g.vals[s.out+s.nOut] = float64(state + 1)
}

func (s *sequencerBlock) event(g *Graph, e int) bool {
	if s.latched[e] {
		return true
	}
	slot := s.in[s.nSignal+e]
	return slot >= 0 && g.vals[slot] > 0.5
}

func (s *sequencerBlock) tick(g *Graph) {
	if !s.started {
		// Time in the first state counts from the first tick.
		s.started, s.entered = true, g.now
	}
	elapsed := g.now - s.entered
	for _, t := range s.states[s.current].next {
		fire := false
		switch {
		case t.event >= 0:
			fire = s.event(g, t.event)
			if fire {
				s.latched[t.event] = false
			}
		case t.after:
			fire = elapsed >= t.threshold
		case t.signal >= 0:
			x := g.vals[s.in[t.signal]]
			fire = (t.above && x > t.threshold) || (!t.above && x < t.threshold)
		}
		if fire {
			s.enter(g, t.to)
			break
		}
	}
	s.drive(g)
}

func (s *sequencerBlock) drive(g *Graph) {
	st := &s.states[s.current]
	elapsed := g.now - s.entered
	for j, o := range st.outputs {
		target := st.values[j]
		if st.ramp > 0 && elapsed < st.ramp {
			target = s.from[o] + (target-s.from[o])*elapsed/st.ramp
		}
		g.vals[s.out+o] = target
	}
}

// request latches an event. Graph.Request has already refused unknown ones.
func (s *sequencerBlock) request(event string) {
	if i := slices.Index(s.events, event); i >= 0 {
		s.latched[i] = true
	}
}
