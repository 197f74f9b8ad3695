package control

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"teeter/models"
)

// The gain set file, in JSON or YAML (the same fields):
//
//	format: teeter-gains
//	version: 1
//	rate: 200 Hz
//	gains:
//	  body_roll.kp: 2
//
// Values are SI numbers; YAML may also give them with a unit ("5 deg").
const (
	gainFormat  = "teeter-gains"
	gainVersion = 1
)

// formatFloat writes the shortest text that reads back to the same float64.
func formatFloat(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// gainFileJSON is the JSON form of a gain file. encoding/json writes the
// fields in this order and the gains in sorted order of path.
type gainFileJSON struct {
	Format  string `json:"format"`
	Version int    `json:"version"`
	Rate    string `json:"rate"`
	// The values are json.Number holding formatFloat's text because
	// encoding/json would write 1e-05 as 0.00001 and 1e+21 as 1e21; the
	// files keep the one number form the YAML writer and the C header use.
	Gains map[string]json.Number `json:"gains"`
}

// MarshalGainsJSON writes a gain set as JSON, paths sorted, byte for byte the
// same for the same set. The values must be finite, as Set, Apply and
// ParseGains make them: JSON has no other numbers.
func MarshalGainsJSON(gs GainSet) []byte {
	f := gainFileJSON{Format: gainFormat, Version: gainVersion, Rate: formatFloat(gs.Rate) + " Hz", Gains: make(map[string]json.Number, len(gs.Gains))}
	for _, e := range gs.Gains {
		f.Gains[e.Path] = json.Number(formatFloat(e.Value))
	}
	data, err := json.MarshalIndent(f, "", "  ")
	if err != nil {
		panic("control: a gain set with a value JSON cannot hold: " + err.Error())
	}
	return append(data, '\n')
}

// MarshalGainsYAML writes a gain set as YAML, paths sorted.
func MarshalGainsYAML(gs GainSet) []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, "format: %s\nversion: %d\nrate: %s Hz\ngains:", gainFormat, gainVersion, formatFloat(gs.Rate))
	gains := sortedCopy(gs.Gains)
	if len(gains) == 0 {
		b.WriteString(" {}")
	}
	for _, e := range gains {
		// Paths are quoted so that no block name can be read as YAML syntax.
		key, _ := json.Marshal(e.Path)
		fmt.Fprintf(&b, "\n  %s: %s", key, formatFloat(e.Value))
	}
	b.WriteByte('\n')
	return b.Bytes()
}

func sortedCopy(gains []Gain) []Gain {
	out := append([]Gain(nil), gains...)
	sortGains(out)
	return out
}

// ParseGains reads a gain set file in JSON or YAML; file names the source in
// problems and in the positions kept with each gain, so that Apply can point
// at the line of an unknown path.
func ParseGains(file string, data []byte) (GainSet, error) {
	// JSON is read by the YAML parser too, which keeps positions.
	v, err := models.ParseValue(file, data)
	if err != nil {
		return GainSet{}, err
	}
	var ps models.Problems
	var gs GainSet
	if v.Kind != models.Map {
		ps.Add(v.Pos, "", "a gain set is a mapping with format, version, rate and gains")
		return gs, ps.Err()
	}
	seen := map[string]bool{}
	for i := range v.Fields {
		f := &v.Fields[i]
		seen[f.Key] = true
		switch f.Key {
		case "format":
			if f.Value.Text != gainFormat {
				ps.Add(f.Value.Pos, "format", "format %q is not %s", f.Value.Text, gainFormat)
			}
		case "version":
			if f.Value.Text != strconv.Itoa(gainVersion) {
				ps.Add(f.Value.Pos, "version", "version %q is not supported (this program reads version %d)", f.Value.Text, gainVersion)
			}
		case "rate":
			hz, _, err := models.ParseQuantity(f.Value.Text, models.Frequency)
			switch {
			case err != nil:
				ps.Add(f.Value.Pos, "rate", "%v", err)
			case hz <= 0:
				ps.Add(f.Value.Pos, "rate", "rate is a positive frequency such as 200 Hz")
			}
			gs.Rate = hz
		case "gains":
			if f.Value.Kind != models.Map && !(f.Value.Kind == models.Null) {
				ps.Add(f.Value.Pos, "gains", "gains is a mapping of block.param to value")
				continue
			}
			dup := map[string]bool{}
			for j := range f.Value.Fields {
				gf := &f.Value.Fields[j]
				if dup[gf.Key] {
					ps.Add(gf.KeyPos, "gains."+gf.Key, "%q is given twice", gf.Key)
					continue
				}
				dup[gf.Key] = true
				if gf.Value.Kind != models.Scalar {
					ps.Add(gf.Value.Pos, "gains."+gf.Key, "a gain is a number, not %s", gf.Value.Kind)
					continue
				}
				x, _, err := models.ParseQuantity(gf.Value.Text)
				if err != nil {
					ps.Add(gf.Value.Pos, "gains."+gf.Key, "%v", err)
					continue
				}
				gs.Gains = append(gs.Gains, Gain{Path: gf.Key, Value: x, Pos: gf.KeyPos})
			}
		default:
			ps.Add(f.KeyPos, f.Key, "unknown field %q (a gain set has format, version, rate, gains)", f.Key)
		}
	}
	for _, k := range []string{"format", "version", "gains"} {
		if !seen[k] {
			ps.Add(mapPos(&v), k, "missing: a gain set needs %s", k)
		}
	}
	sortGains(gs.Gains)
	return gs, ps.Err()
}

// ReadGains reads a gain set file.
func ReadGains(file string) (GainSet, error) {
	data, err := os.ReadFile(file)
	if err != nil {
		return GainSet{}, err
	}
	return ParseGains(file, data)
}

// WriteGains saves a gain set, as JSON when the file name ends in .json and
// as YAML otherwise. It refuses a value that is not finite, which neither
// form could read back.
func WriteGains(file string, gs GainSet) error {
	for _, e := range gs.Gains {
		if !isFinite(e.Value) {
			return fmt.Errorf("%s: gain %s is %v, not a finite number", file, e.Path, e.Value)
		}
	}
	if strings.EqualFold(filepath.Ext(file), ".json") {
		return writeBytes(file, MarshalGainsJSON(gs))
	}
	return writeBytes(file, MarshalGainsYAML(gs))
}

// writeBytes saves data through models.WriteFileAtomic, the one place that
// writes files, so a reader never sees half a file.
func writeBytes(file string, data []byte) error {
	return models.WriteFileAtomic(file, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// isFinite reports whether x is neither infinite nor NaN.
func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
