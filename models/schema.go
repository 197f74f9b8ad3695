package models

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// walker reads a Value tree against the robot schema. It never stops at the
// first problem: every reader records what is wrong and returns a usable
// zero, so one pass reports everything.
type walker struct {
	ps  Problems
	pos map[string]Pos
}

func (w *walker) add(pos Pos, path, format string, args ...any) {
	w.ps.Add(pos, path, format, args...)
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// object reads the fields of one mapping and remembers which keys the
// schema asked for, so that done can report the rest as unknown.
type object struct {
	w     *walker
	v     *Value // nil when the value is not a mapping
	path  string
	pos   Pos
	known []string
}

func (w *walker) object(v *Value, path string) *object {
	o := &object{w: w, path: path, pos: v.Pos}
	if v.Kind == Map && len(v.Fields) > 0 {
		// The mapping's own position is its first colon; its first key is
		// where a reader looks.
		o.pos = v.Fields[0].KeyPos
	}
	if v.Kind != Map {
		w.add(v.Pos, path, "should be a mapping of fields, not %s", v.Kind)
		return o
	}
	o.v = v
	if path != "" {
		w.pos[path] = o.pos
	}
	return o
}

// get returns the value of a field, or nil when it is absent or empty.
func (o *object) get(key string) *Value {
	o.known = append(o.known, key)
	if o.v == nil {
		return nil
	}
	f, ok := o.v.Get(key)
	if !ok {
		return nil
	}
	o.w.pos[join(o.path, key)] = f.Value.Pos
	if f.Value.Kind == Null {
		return nil
	}
	return &f.Value
}

func (o *object) has(key string) bool {
	if o.v == nil {
		return false
	}
	f, ok := o.v.Get(key)
	return ok && f.Value.Kind != Null
}

// need is get for a required field.
func (o *object) need(key string) *Value {
	v := o.get(key)
	if v == nil && o.v != nil {
		pos := o.pos
		if f, ok := o.v.Get(key); ok {
			pos = f.KeyPos
		}
		o.w.add(pos, join(o.path, key), "missing required field %s", key)
	}
	return v
}

// field is need(key) for a required field and get(key) for an optional one.
func (o *object) field(key string, required bool) *Value {
	if required {
		return o.need(key)
	}
	return o.get(key)
}

// forbid reports a field that makes no sense in this context.
func (o *object) forbid(key, why string) {
	o.known = append(o.known, key)
	if o.v == nil {
		return
	}
	if f, ok := o.v.Get(key); ok {
		o.w.add(f.KeyPos, join(o.path, key), "%s", why)
	}
}

// done reports keys the schema did not ask for and keys given twice.
func (o *object) done() {
	if o.v == nil {
		return
	}
	seen := map[string]bool{}
	for _, f := range o.v.Fields {
		path := join(o.path, f.Key)
		if seen[f.Key] {
			o.w.add(f.KeyPos, path, "field %s is given twice", f.Key)
			continue
		}
		seen[f.Key] = true
		if slices.Contains(o.known, f.Key) {
			continue
		}
		if s := closest(f.Key, o.known); s != "" {
			o.w.add(f.KeyPos, path, "unknown field %q (did you mean %q?)", f.Key, s)
		} else {
			o.w.add(f.KeyPos, path, "unknown field %q", f.Key)
		}
	}
}

// scalar checks that v is a single value.
func (w *walker) scalar(v *Value, path string) (string, bool) {
	if v.Kind != Scalar {
		w.add(v.Pos, path, "should be a single value, not %s", v.Kind)
		return "", false
	}
	return v.Text, true
}

func (o *object) text(key string, required bool) (string, *Value) {
	v := o.field(key, required)
	if v == nil {
		return "", nil
	}
	s, ok := o.w.scalar(v, join(o.path, key))
	if !ok {
		return "", nil
	}
	return s, v
}

// choice reads a field whose value is one of a few words.
func (o *object) choice(key string, required bool, def string, words ...string) string {
	s, v := o.text(key, required)
	if v == nil {
		return def
	}
	if !slices.Contains(words, s) {
		o.w.add(v.Pos, join(o.path, key), "%q is not one of %s", s, strings.Join(words, ", "))
		return def
	}
	return s
}

func (o *object) boolean(key string) (bool, *Value) {
	s, v := o.text(key, false)
	if v == nil {
		return false, nil
	}
	switch s {
	case "true", "yes":
		return true, v
	case "false", "no":
		return false, v
	}
	o.w.add(v.Pos, join(o.path, key), "%q is not true or false", s)
	return false, nil
}

// fileNumber is a number read from the file, in SI, with where it was
// written, for range checks that point at it.
type fileNumber struct {
	v    float64
	pos  Pos
	path string
	ok   bool // present and valid
}

func (w *walker) quantityOf(v *Value, path string, kinds ...Kind) fileNumber {
	s, ok := w.scalar(v, path)
	if !ok {
		return fileNumber{pos: v.Pos, path: path}
	}
	x, _, err := ParseQuantity(s, kinds...)
	if err != nil {
		w.add(v.Pos, path, "%s", err.Error())
		return fileNumber{pos: v.Pos, path: path}
	}
	return fileNumber{v: x, pos: v.Pos, path: path, ok: true}
}

// num reads a quantity field into dst. dst keeps its value (the default)
// when the field is absent or wrong.
func (o *object) num(key string, required bool, dst *float64, kinds ...Kind) fileNumber {
	v := o.field(key, required)
	if v == nil {
		return fileNumber{pos: o.pos, path: join(o.path, key)}
	}
	q := o.w.quantityOf(v, join(o.path, key), kinds...)
	if q.ok {
		*dst = q.v
	}
	return q
}

// pair reads a two-element list such as a point [x, y] or a range [lo, hi].
func (o *object) pair(key string, required bool, kinds ...Kind) (a, b fileNumber, present bool) {
	v := o.field(key, required)
	if v == nil {
		return fileNumber{}, fileNumber{}, false
	}
	path := join(o.path, key)
	if v.Kind != List || len(v.Items) != 2 {
		o.w.add(v.Pos, path, "should be a list of two values like [1, 2], not %s", describe(v))
		return fileNumber{}, fileNumber{}, true
	}
	a = o.w.quantityOf(&v.Items[0], path+"[0]", kinds...)
	b = o.w.quantityOf(&v.Items[1], path+"[1]", kinds...)
	a.path, b.path = path, path
	return a, b, true
}

// vec reads a point or direction into dst when it is valid.
func (o *object) vec(key string, required bool, dst *Vec2) (Pos, bool) {
	x, y, _ := o.pair(key, required, Length)
	if x.ok && y.ok {
		*dst = Vec2{x.v, y.v}
		return x.pos, true
	}
	return Pos{}, false
}

func describe(v *Value) string {
	switch v.Kind {
	case List:
		return fmt.Sprintf("a list of %d", len(v.Items))
	case Scalar:
		return strconv.Quote(v.Text)
	}
	return v.Kind.String()
}

// list reads a field holding a list.
func (o *object) list(key string, required bool) []Value {
	v := o.field(key, required)
	if v == nil {
		return nil
	}
	if v.Kind != List {
		o.w.add(v.Pos, join(o.path, key), "should be a list, not %s", v.Kind)
		return nil
	}
	if required && len(v.Items) == 0 {
		o.w.add(v.Pos, join(o.path, key), "the list is empty")
	}
	return v.Items
}

// check reports q when it is valid but cond fails.
func (w *walker) check(q fileNumber, cond bool, format string, args ...any) bool {
	if q.ok && !cond {
		w.add(q.pos, q.path, format, args...)
		return false
	}
	return true
}

func (w *walker) positive(q fileNumber) bool {
	return w.check(q, q.v > 0, "must be greater than zero")
}

func (w *walker) nonNegative(q fileNumber) bool {
	return w.check(q, q.v >= 0, "must not be negative")
}

func (w *walker) between(q fileNumber, lo, hi float64, unit string) bool {
	return w.check(q, q.v >= lo && q.v <= hi, "must be between %s and %s", fmtUnit(lo, unit), fmtUnit(hi, unit))
}

func fmtUnit(v float64, unit string) string {
	s := strconv.FormatFloat(v, 'g', 6, 64)
	if unit != "" {
		s += " " + unit
	}
	return s
}

// nameRef holds the names defined in one section, for references to them.
type nameRef struct {
	what  string // "link", "joint", ...
	index map[string]int
	pos   map[string]Pos
	order []string
}

func newNames(what string) *nameRef {
	return &nameRef{what: what, index: map[string]int{}, pos: map[string]Pos{}}
}

// define registers a name; it reports a duplicate and returns false.
func (n *nameRef) define(w *walker, name string, i int, pos Pos, path string) bool {
	if first, dup := n.pos[name]; dup {
		w.add(pos, path, "duplicate %s name %q (first used at line %d)", n.what, name, first.Line)
		return false
	}
	n.index[name] = i
	n.pos[name] = pos
	n.order = append(n.order, name)
	return true
}

// ref reads a field naming an element of n. It returns the name and its
// index, or -1 when absent or unknown (unknown is reported).
func (o *object) ref(key string, required bool, n *nameRef) (string, int) {
	s, v := o.text(key, required)
	if v == nil {
		return "", -1
	}
	i, ok := n.index[s]
	if !ok {
		if c := closest(s, n.order); c != "" {
			o.w.add(v.Pos, join(o.path, key), "unknown %s %q (did you mean %q?)", n.what, s, c)
		} else {
			o.w.add(v.Pos, join(o.path, key), "unknown %s %q", n.what, s)
		}
		return s, -1
	}
	return s, i
}

// element starts reading one named item of a list section. Its path is
// SECTION.NAME when the name is good and new, else SECTION[i].
func (w *walker) element(section string, i int, v *Value, names *nameRef) (*object, string) {
	o := w.object(v, fmt.Sprintf("%s[%d]", section, i))
	name, nv := o.text("name", true)
	if nv == nil {
		return o, ""
	}
	if !checkName(w, name, nv.Pos, join(o.path, "name")) {
		return o, ""
	}
	if !names.define(w, name, i, o.pos, join(o.path, "name")) {
		return o, ""
	}
	o.path = section + "." + name
	w.pos[o.path] = o.pos
	w.pos[join(o.path, "name")] = nv.Pos
	return o, name
}

func checkName(w *walker, name string, pos Pos, path string) bool {
	switch {
	case name == "":
		w.add(pos, path, "the name is empty")
	case !ValidName(name):
		w.add(pos, path, "name %q is not %s", name, NameRule)
	default:
		return true
	}
	return false
}

// closest returns the candidate nearest to s by edit distance when it is
// near enough to be a likely typo, else "".
func closest(s string, candidates []string) string {
	best, bestD := "", 3
	if len(s) <= 3 {
		bestD = 2
	}
	for _, c := range candidates {
		if d := editDistance(s, c); d < bestD {
			best, bestD = c, d
		}
	}
	return best
}

func editDistance(a, b string) int {
	if len(a) > 64 || len(b) > 64 {
		return math.MaxInt / 2
	}
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
