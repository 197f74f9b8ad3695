package sim

import (
	"bufio"
	"io"
	"strconv"
	"strings"

	"teeter/models"
)

// Recorder holds one row of every signal per controller tick, in named
// columns, in preallocated chunks. With a capacity it keeps the last rows
// as a ring and never allocates after it is made.
type Recorder struct {
	names, units []string
	index        map[string]int
	chunkRows    int
	chunks       [][]float64
	n            int // rows held
	capacity     int // 0: unbounded
	first        int // ring: physical index of the oldest row
	readingsAt   int // column of the first sensor reading
}

const chunkRows = 4096

func newRecorder(names, units []string, capacity int) *Recorder {
	r := &Recorder{names: names, units: units, index: make(map[string]int, len(names)), capacity: capacity}
	for i, n := range names {
		if _, dup := r.index[n]; !dup {
			r.index[n] = i
		}
	}
	if capacity > 0 {
		r.chunkRows = capacity
		r.chunks = [][]float64{make([]float64, capacity*len(names))}
	} else {
		r.chunkRows = chunkRows
	}
	return r
}

// NewRecorder holds the given columns, all of one length, as a recording:
// signals made elsewhere, such as a test's curve of known measure.
func NewRecorder(names, units []string, columns [][]float64) *Recorder {
	r := newRecorder(names, units, 0)
	for i := range columns[0] {
		row := r.next()
		for c := range columns {
			row[c] = columns[c][i]
		}
	}
	return r
}

// next returns the slot for a new row, dropping the oldest in a full ring.
func (r *Recorder) next() []float64 {
	nc := len(r.names)
	var phys int
	switch {
	case r.capacity > 0 && r.n == r.capacity:
		phys = r.first
		r.first = (r.first + 1) % r.capacity
	case r.capacity > 0:
		phys = r.n
		r.n++
	default:
		if r.n == len(r.chunks)*r.chunkRows {
			r.chunks = append(r.chunks, make([]float64, r.chunkRows*nc))
		}
		phys = r.n
		r.n++
	}
	c, k := phys/r.chunkRows, phys%r.chunkRows
	return r.chunks[c][k*nc : (k+1)*nc]
}

func (r *Recorder) row(i int) []float64 {
	phys := i
	if r.capacity > 0 {
		phys = (r.first + i) % r.capacity
	}
	nc := len(r.names)
	c, k := phys/r.chunkRows, phys%r.chunkRows
	return r.chunks[c][k*nc : (k+1)*nc]
}

// Len is the number of rows held.
func (r *Recorder) Len() int { return r.n }

// Columns are the column names (without units); do not modify.
func (r *Recorder) Columns() []string { return r.names }

// Unit is the SI unit of column i ("" for a pure number).
func (r *Recorder) Unit(i int) string { return r.units[i] }

// Index finds a column by name, or -1.
func (r *Recorder) Index(name string) int {
	if i, ok := r.index[name]; ok {
		return i
	}
	return -1
}

// At is the value in row i (0 = oldest held) and column col.
func (r *Recorder) At(i, col int) float64 { return r.row(i)[col] }

// Column copies the named column, oldest row first; nil if there is none.
func (r *Recorder) Column(name string) []float64 {
	c := r.Index(name)
	if c < 0 {
		return nil
	}
	out := make([]float64, r.n)
	for i := range out {
		out[i] = r.row(i)[c]
	}
	return out
}

// WriteCSV writes a header of "name [unit]" and one line per row, with
// numbers in the shortest form that reads back exactly.
func (r *Recorder) WriteCSV(w io.Writer) error {
	bw := bufio.NewWriter(w)
	for i, n := range r.names {
		if i > 0 {
			bw.WriteByte(',')
		}
		h := n
		if r.units[i] != "" {
			h += " [" + r.units[i] + "]"
		}
		if strings.ContainsAny(h, ",\"\n") {
			h = `"` + strings.ReplaceAll(h, `"`, `""`) + `"`
		}
		bw.WriteString(h)
	}
	bw.WriteByte('\n')
	// Not encoding/csv: it takes a string per number, 2.3x slower and an allocation each.
	var buf []byte
	for i := 0; i < r.n; i++ {
		buf = buf[:0]
		for k, v := range r.row(i) {
			if k > 0 {
				buf = append(buf, ',')
			}
			buf = strconv.AppendFloat(buf, v, 'g', -1, 64)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// The recorder's columns and the code filling a row are kept side by side
// so their orders agree.

func (p *Plant) newRecorder(capacity int) *Recorder {
	var names, units []string
	add := func(n, u string) { names = append(names, n); units = append(units, u) }
	add("time", "s")
	for i := range p.joints {
		add(p.joints[i].name+".position", jointUnit(p.joints[i].kind))
	}
	for i := range p.acts {
		a := &p.acts[i]
		pos, force := "rad", "N*m"
		if a.drive != driveRotary {
			pos, force = "m", "N"
		}
		add(a.name+".screw", pos)
		add(a.name+".output", pos)
		add(a.name+".gap", pos)
		add(a.name+".command", "")
		add(a.name+".force", force)
		add(a.name+".current", "A")
	}
	readingsAt := len(names)
	chUnits := models.ChannelUnits(p.robot)
	for i, n := range models.Channels(p.robot) {
		add(n, chUnits[i])
	}
	for i := range p.pads {
		add(p.pads[i].name+".compression", "m")
		add(p.pads[i].name+".force", "N")
		add(p.pads[i].name+".stop", "N")
	}
	if p.ballast != nil {
		add("ballast.position", "m")
	}
	add("com.x", "m")
	add("com.y", "m")
	add("cop.x", "m")
	add("torso_tilt", "rad")
	if !p.battery.nominal {
		add("battery.voltage", "V")
	}
	add("battery.current", "A")
	if p.signals != nil {
		taken := make(map[string]bool, len(names))
		for _, n := range names {
			taken[n] = true
		}
		for _, n := range p.signals.SignalNames() {
			if taken[n] {
				n = "ctrl." + n
			}
			taken[n] = true
			add(n, "")
		}
	}
	r := newRecorder(names, units, capacity)
	r.readingsAt = readingsAt
	return r
}

// firstSignal is the recorder column of the first controller signal.
func (p *Plant) firstSignal() int { return len(p.rec.names) - len(p.sigMap) }

// remap matches the current controller's signals to the recorder's signal
// columns by name.
func (p *Plant) remap() {
	if p.rec == nil {
		return
	}
	if p.sigMap == nil {
		// The first controller made the columns.
		if p.signals != nil {
			p.sigMap = make([]int, len(p.signals.SignalNames()))
		} else {
			p.sigMap = []int{}
		}
	}
	var names []string
	if p.signals != nil {
		names = p.signals.SignalNames()
	}
	first := p.firstSignal()
	for i := range p.sigMap {
		p.sigMap[i] = -1
		col := p.rec.names[first+i]
		for k, n := range names {
			if n == col || "ctrl."+n == col {
				p.sigMap[i] = k
			}
		}
	}
}

func jointUnit(k models.JointKind) string {
	if k == models.Revolute {
		return "rad"
	}
	return "m"
}

// record writes a row for time now.
func (p *Plant) record(now float64) {
	row := p.rec.next()
	k := 0
	put := func(v float64) { row[k] = v; k++ }
	put(now)
	for i := range p.joints {
		put(p.joints[i].position())
	}
	for i := range p.acts {
		a := &p.acts[i]
		put(a.screw)
		put(a.output())
		put(a.gap())
		put(a.command)
		put(a.force)
		put(a.current)
	}
	for _, v := range p.readings {
		put(v)
	}
	for i := range p.pads {
		put(p.pads[i].compression)
		put(p.pads[i].force)
		put(p.pads[i].stop)
	}
	if p.ballast != nil {
		put(p.ballast.position())
	}
	com := p.centreOfMass()
	put(com.X)
	put(com.Y)
	cop, ok := p.centreOfPressure()
	if !ok {
		cop = com.X // airborne: no pressure, so show the centre of mass
	}
	put(cop)
	put(tilt(p.torso.body))
	if !p.battery.nominal {
		put(p.battery.voltage)
	}
	current := 0.0
	for i := range p.acts {
		current += p.acts[i].current
	}
	put(current)
	for _, s := range p.sigMap {
		if s >= 0 {
			put(p.sigBuf[s])
		} else {
			put(0)
		}
	}
}
