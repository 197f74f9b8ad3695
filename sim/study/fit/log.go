package fit

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Log is a recording read from a CSV file: a time column and named columns
// in SI, as teeter's own recordings write them.
type Log struct {
	File string
	// Time is each row's time, s, strictly increasing.
	Time []float64
	// Names are the columns after time, as written without their units;
	// Units are their units as written ("" for SI).
	Names, Units []string
	cols         [][]float64 // SI, one slice per name
}

// Column is the named column in SI, or nil.
func (l *Log) Column(name string) []float64 {
	for i, n := range l.Names {
		if n == name {
			return l.cols[i]
		}
	}
	return nil
}

// maxRowProblems bounds the problems listed for the rows of one file, so a
// file with a wrong separator does not print a line per row.
const maxRowProblems = 20

// ReadLog reads a log. known gives the SI unit of every column the robot
// can have (a recorder's columns); period is the control period, s, the
// shortest log worth replaying. Every problem is returned, each with the
// file, line and column.
func ReadLog(file string, data []byte, known map[string]string, period float64) (*Log, error) {
	r := &logReader{file: file, cr: csv.NewReader(bytes.NewReader(data))}
	r.cr.FieldsPerRecord = -1
	r.cr.ReuseRecord = true
	r.cr.Comment = '#'
	header, err := r.cr.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			r.ps.Add(r.at(1, 1), "", "the log is empty; it needs a header with a time column, such as time [s]")
		} else {
			r.ps.Add(csvPos(file, err, 1), "", "%s", csvMsg(err))
		}
		return nil, r.ps.Err()
	}
	header = slices.Clone(header) // the reader reuses its record
	l := &Log{File: file}
	factors, timeCol := r.readHeader(l, header, known)
	lastLine := r.readRows(l, header, factors, timeCol)
	if r.rowProblems > maxRowProblems {
		r.ps.Add(r.at(lastLine, 1), "", "and %d more problems in the rows", r.rowProblems-maxRowProblems)
	}
	if timeCol >= 0 && len(r.ps) == 0 {
		t := l.cols[timeCol]
		if len(t) < 2 || t[len(t)-1]-t[0] < period {
			r.ps.Add(r.at(lastLine, 1), "", "the log is shorter than one control period (%g s)", period)
		}
	}
	if err := r.ps.Err(); err != nil {
		return nil, err
	}
	l.Time = l.cols[timeCol]
	l.Names = append(l.Names[:timeCol:timeCol], l.Names[timeCol+1:]...)
	l.Units = append(l.Units[:timeCol:timeCol], l.Units[timeCol+1:]...)
	l.cols = append(l.cols[:timeCol:timeCol], l.cols[timeCol+1:]...)
	return l, nil
}

// logReader is one reading of a log: the CSV reader and the problems found
// so far.
type logReader struct {
	file        string
	cr          *csv.Reader
	ps          models.Problems
	rowProblems int // found in the rows, listed or not
}

func (r *logReader) at(line, col int) models.Pos {
	return models.Pos{File: r.file, Line: line, Col: col}
}

// addRow adds a problem found in the rows, the first maxRowProblems only.
func (r *logReader) addRow(pos models.Pos, format string, args ...any) {
	if r.rowProblems++; r.rowProblems <= maxRowProblems {
		r.ps.Add(pos, "", format, args...)
	}
}

// readHeader fills l's names and units from the header and makes its
// columns. factors take each column to SI (NaN for a column not read);
// timeCol is the time column's index, -1 without one.
func (r *logReader) readHeader(l *Log, header []string, known map[string]string) (factors []float64, timeCol int) {
	timeCol = -1
	seen := map[string]bool{}
	for i, h := range header {
		line, col := r.cr.FieldPos(i)
		name, unit, ok := splitHeader(h)
		l.Units = append(l.Units, unit)
		pos := r.at(line, col)
		switch {
		case !ok:
			r.ps.Add(pos, "", "column %q: want NAME or NAME [unit]", h)
		case seen[name]:
			r.ps.Add(pos, "", "column %q appears twice", name)
		case name == "time":
			f, msg := unitFactor(unit, "s")
			if msg != "" {
				r.ps.Add(pos, "", "column time: %s", msg)
			}
			timeCol = i
			factors = append(factors, f)
			l.Names = append(l.Names, name)
			seen[name] = true
			continue
		default:
			si, has := known[name]
			if !has {
				r.ps.Add(pos, "", "column %q: the robot has no such channel", name)
				break
			}
			f, msg := unitFactor(unit, si)
			if msg != "" {
				r.ps.Add(pos, "", "column %s: %s", name, msg)
			}
			factors = append(factors, f)
			l.Names = append(l.Names, name)
			seen[name] = true
			continue
		}
		factors = append(factors, math.NaN())
		l.Names = append(l.Names, "")
	}
	if timeCol < 0 {
		r.ps.Add(r.at(1, 1), "", "no time column (want one named time, as in time [s])")
	}
	l.cols = make([][]float64, len(header))
	return factors, timeCol
}

// readRows appends every row to l's columns in SI and returns the last
// row's line.
func (r *logReader) readRows(l *Log, header []string, factors []float64, timeCol int) (lastLine int) {
	lastLine = 1
	for {
		rec, err := r.cr.Read()
		if errors.Is(err, io.EOF) {
			return lastLine
		}
		if err != nil {
			r.addRow(csvPos(r.file, err, lastLine+1), "%s", csvMsg(err))
			return lastLine // the reader cannot go on after a quoting error
		}
		line, _ := r.cr.FieldPos(0)
		lastLine = line
		if len(rec) != len(header) {
			_, col := r.cr.FieldPos(len(rec) - 1)
			word := "few"
			if len(rec) > len(header) {
				word = "many"
			}
			r.addRow(r.at(line, col), "too %s fields: %d, the header has %d", word, len(rec), len(header))
			continue
		}
		r.readRow(l, rec, line, header, factors, timeCol)
	}
}

// readRow appends one row of as many fields as the header to l's columns.
func (r *logReader) readRow(l *Log, rec []string, line int, header []string, factors []float64, timeCol int) {
	for i, text := range rec {
		_, col := r.cr.FieldPos(i)
		v, err := strconv.ParseFloat(strings.TrimSpace(text), 64)
		switch {
		case err != nil && !errors.Is(err, strconv.ErrRange):
			r.addRow(r.at(line, col), "column %s: %q is not a number", header[i], text)
			v = math.NaN()
		case math.IsNaN(v) || math.IsInf(v, 0):
			r.addRow(r.at(line, col), "column %s: %q is not a finite number", header[i], text)
			v = math.NaN()
		}
		v *= factors[i]
		l.cols[i] = append(l.cols[i], v)
		if i == timeCol && len(l.cols[i]) > 1 && !(v > l.cols[i][len(l.cols[i])-2]) {
			r.addRow(r.at(line, col), "time %s is not later than the row before's", strings.TrimSpace(text))
		}
	}
}

// splitHeader splits "name [unit]" into its name and unit ("" for none).
func splitHeader(h string) (name, unit string, ok bool) {
	h = strings.TrimSpace(h)
	name = h
	if i := strings.IndexByte(h, '['); i >= 0 {
		if !strings.HasSuffix(h, "]") {
			return "", "", false
		}
		name, unit = strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1:len(h)-1])
	}
	return name, unit, name != "" && !strings.ContainsAny(name, "[] ")
}

// unitFactor is the factor taking a column in unit to SI, where si is the
// channel's SI unit; a column without a unit is SI. The message says what
// is wrong, "" when nothing is.
func unitFactor(unit, si string) (float64, string) {
	_, want, err := models.ParseQuantity("1 " + si)
	if si == "" {
		want, err = models.Dimensionless, nil
	}
	if err != nil {
		return math.NaN(), fmt.Sprintf("unit %q: %v", si, err)
	}
	if unit == "" {
		return 1, ""
	}
	f, _, err := models.ParseQuantity("1 "+unit, want)
	if err != nil {
		_, got, perr := models.ParseQuantity("1 " + unit)
		if perr != nil {
			return math.NaN(), fmt.Sprintf("unit [%s]: %v", unit, perr)
		}
		return math.NaN(), fmt.Sprintf("unit [%s] is of kind %s, but the channel is of kind %s (%s)", unit, got.Name, want.Name, orNone(want.Unit))
	}
	return f, ""
}

func orNone(unit string) string {
	if unit == "" {
		return "no unit"
	}
	return unit
}

// csvPos is where the CSV reader found err, or line 1 of the row after the
// last good one.
func csvPos(file string, err error, line int) models.Pos {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return models.Pos{File: file, Line: pe.Line, Col: pe.Column}
	}
	return models.Pos{File: file, Line: line, Col: 1}
}

func csvMsg(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return "CSV: " + pe.Err.Error()
	}
	return err.Error()
}

// Known is the SI unit of every column a recording of the rig has, as
// teeter run --csv writes them ("" for a pure number).
func Known(r *rig.Rig) (map[string]string, error) {
	p, _, err := r.Build(sim.Options{})
	if err != nil {
		return nil, err
	}
	rec := p.Recorder()
	out := make(map[string]string, len(rec.Columns()))
	for i, n := range rec.Columns() {
		out[n] = rec.Unit(i)
	}
	return out, nil
}

// ReadLogFor reads a log of the rig's robot, shorter than none of its
// control periods.
func ReadLogFor(file string, data []byte, r *rig.Rig) (*Log, error) {
	known, err := Known(r)
	if err != nil {
		return nil, err
	}
	return ReadLog(file, data, known, 1/r.ControlRate())
}
