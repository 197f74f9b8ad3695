package sweep

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"teeter/sim/study/metric"
)

// WriteCSV writes the result as CSV: a header of point, points (the size
// of the full grid), seeds (per point), the parameter paths as "path
// [unit]", each metric as "name [unit]" (the mean over the seeds) and
// "name worst [unit]", status (ok or failed) and error, then one line per
// point in grid order. Numbers are written in the shortest form that
// reads back exactly, so equal results give equal bytes.
func (s *Result) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	head := []string{"point", "points", "seeds"}
	for i, a := range s.Axes {
		head = append(head, withUnit(a, s.AxisUnits[i]))
	}
	for i, m := range s.Metrics {
		head = append(head, withUnit(m, s.Units[i]), withUnit(m+worstSuffix, s.Units[i]))
	}
	head = append(head, "status", "error")
	if err := cw.Write(head); err != nil {
		return err
	}
	for _, p := range s.Points {
		row := []string{strconv.Itoa(p.Index), strconv.Itoa(s.Total), strconv.Itoa(s.Seeds)}
		for _, v := range p.Values {
			row = append(row, formatNumber(v))
		}
		for i, v := range p.Metrics {
			row = append(row, formatNumber(v), formatNumber(p.Worst[i]))
		}
		status := "ok"
		if p.Err != "" {
			status = "failed"
		}
		row = append(row, status, p.Err)
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// worstSuffix marks a metric's worst-over-seeds column.
const worstSuffix = " worst"

func withUnit(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " [" + unit + "]"
}

func formatNumber(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// ReadCSV reads what WriteCSV wrote; name labels errors.
func ReadCSV(name string, r io.Reader) (*Result, error) {
	cr := csv.NewReader(r)
	head, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	s, err := readHead(name, head)
	if err != nil {
		return nil, err
	}
	for line := 2; ; line++ {
		row, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %v", name, err)
		}
		p, err := s.readRow(head, row)
		if err != nil {
			return nil, fmt.Errorf("%s:%d: %v", name, line, err)
		}
		s.Points = append(s.Points, p)
	}
	s.Total = max(s.Total, 0)
	return s, nil
}

// readHead reads the header into an empty result (Total -1: not yet
// known).
func readHead(name string, head []string) (*Result, error) {
	n := len(head)
	if n < 7 || head[0] != "point" || head[1] != "points" || head[2] != "seeds" || head[n-2] != "status" || head[n-1] != "error" {
		return nil, fmt.Errorf("%s:1: not a sweep CSV (want point, points, seeds, parameters, metrics, status, error)", name)
	}
	s := &Result{Total: -1}
	cols := head[3 : n-2]
	for c := 0; c < len(cols); c++ {
		base, unit, _ := strings.Cut(cols[c], " [")
		unit = strings.TrimSuffix(unit, "]")
		if _, err := metric.Lookup(base); err == nil {
			if c+1 >= len(cols) || cols[c+1] != withUnit(base+worstSuffix, unit) {
				return nil, fmt.Errorf("%s:1: metric %q is not followed by its worst", name, cols[c])
			}
			s.Metrics = append(s.Metrics, base)
			s.Units = append(s.Units, unit)
			c++
			continue
		}
		if len(s.Metrics) > 0 {
			return nil, fmt.Errorf("%s:1: column %q after the metrics is not a metric", name, cols[c])
		}
		s.Axes = append(s.Axes, base)
		s.AxisUnits = append(s.AxisUnits, unit)
	}
	if len(s.Axes) == 0 || len(s.Metrics) == 0 {
		return nil, fmt.Errorf("%s:1: want at least one parameter and one metric column", name)
	}
	return s, nil
}

// readRow reads one point, checking it against the grid size and the
// points before it, and sets the result's Total and Seeds from the first.
func (s *Result) readRow(head, row []string) (Point, error) {
	n := len(head)
	p := Point{Err: row[n-1]}
	index, err1 := strconv.Atoi(row[0])
	total, err2 := strconv.Atoi(row[1])
	seeds, err3 := strconv.Atoi(row[2])
	if err1 != nil || err2 != nil || index < 0 || total < 1 || index >= total {
		return p, fmt.Errorf("bad point %q of %q", row[0], row[1])
	}
	if err3 != nil || seeds < 1 {
		return p, fmt.Errorf("bad seed count %q", row[2])
	}
	if s.Total >= 0 && (total != s.Total || seeds != s.Seeds) {
		return p, fmt.Errorf("points %d and seeds %d differ from %d and %d above", total, seeds, s.Total, s.Seeds)
	}
	s.Total, s.Seeds, p.Index = total, seeds, index
	for c := 3; c < n-2; c++ {
		v, err := strconv.ParseFloat(row[c], 64)
		if err != nil {
			return p, fmt.Errorf("column %s: %q is not a number", head[c], row[c])
		}
		switch k := c - 3 - len(s.Axes); {
		case k < 0:
			p.Values = append(p.Values, v)
		case k%2 == 0:
			p.Metrics = append(p.Metrics, v)
		default:
			p.Worst = append(p.Worst, v)
		}
	}
	if st := row[n-2]; st != "ok" && st != "failed" || (st == "failed") != (p.Err != "") {
		return p, fmt.Errorf("status %q does not fit error %q", st, p.Err)
	}
	if len(s.Points) > 0 && s.Points[len(s.Points)-1].Index >= index {
		return p, fmt.Errorf("point %d is out of order", index)
	}
	return p, nil
}

// Merge joins the results of shards of one sweep into one, in grid order.
// It refuses results with other columns or grid size, and a point given
// twice with different contents. Missing lists the points no part had.
func Merge(parts ...*Result) (merged *Result, missing []int, err error) {
	if len(parts) == 0 {
		return nil, nil, fmt.Errorf("merge: nothing to merge")
	}
	first := parts[0]
	byIndex := map[int]Point{}
	total, seeds := -1, 0
	for k, p := range parts {
		if !slices.Equal(p.Axes, first.Axes) || !slices.Equal(p.AxisUnits, first.AxisUnits) || !slices.Equal(p.Metrics, first.Metrics) {
			return nil, nil, fmt.Errorf("merge: part %d has columns %v %v, part 1 has %v %v", k+1, p.Axes, p.Metrics, first.Axes, first.Metrics)
		}
		if len(p.Points) == 0 {
			continue
		}
		if seeds > 0 && p.Seeds != seeds {
			return nil, nil, fmt.Errorf("merge: part %d ran %d seeds a point, another %d", k+1, p.Seeds, seeds)
		}
		seeds = p.Seeds
		if total >= 0 && p.Total != total {
			return nil, nil, fmt.Errorf("merge: part %d has a grid of %d points, another has %d", k+1, p.Total, total)
		}
		total = p.Total
		for _, pt := range p.Points {
			if old, dup := byIndex[pt.Index]; dup && !samePoint(old, pt) {
				return nil, nil, fmt.Errorf("merge: point %d differs between parts", pt.Index)
			}
			byIndex[pt.Index] = pt
		}
	}
	merged = &Result{Axes: first.Axes, AxisUnits: first.AxisUnits, Metrics: first.Metrics, Units: first.Units, Seeds: seeds, Total: max(total, 0)}
	for i := 0; i < merged.Total; i++ {
		if pt, ok := byIndex[i]; ok {
			merged.Points = append(merged.Points, pt)
		} else {
			missing = append(missing, i)
		}
	}
	return merged, missing, nil
}

func samePoint(a, b Point) bool {
	eq := func(x, y []float64) bool {
		return slices.EqualFunc(x, y, func(p, q float64) bool { return p == q || math.IsNaN(p) && math.IsNaN(q) })
	}
	return a.Err == b.Err && eq(a.Values, b.Values) && eq(a.Metrics, b.Metrics) && eq(a.Worst, b.Worst)
}
