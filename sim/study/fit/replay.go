package fit

import (
	"math"

	"teeter/models"
)

// Playback is a controller that plays logged actuator commands back: at
// each tick every actuator gets the command of the last log row at or
// before the tick (the log's time counted from its first row). An actuator
// the log has no command for gets 0; a lead screw then holds.
type Playback struct {
	time []float64   // from the first row, s
	cmds [][]float64 // per actuator in ActuatorNames order; nil: none logged
	row  int
}

// NewPlayback takes the commands for the robot's actuators from the log.
func NewPlayback(l *Log, r *models.Robot) *Playback {
	p := &Playback{time: make([]float64, len(l.Time))}
	for i, t := range l.Time {
		p.time[i] = t - l.Time[0]
	}
	for _, a := range models.ActuatorNames(r) {
		p.cmds = append(p.cmds, l.Column(a+".command"))
	}
	return p
}

// Reset goes back to the first row.
func (p *Playback) Reset() { p.row = 0 }

// Tick writes the logged commands for time now.
func (p *Playback) Tick(now float64, _, commands []float64) {
	// A row's time may carry rounding of its own: a tick within a
	// microsecond of it counts as at it.
	for p.row+1 < len(p.time) && p.time[p.row+1] <= now+1e-6 {
		p.row++
	}
	for i, c := range p.cmds {
		commands[i] = 0
		if c != nil {
			commands[i] = c[p.row]
		}
	}
}

// SetInitialPose starts the robot where the log starts, as far as its
// sensors tell: each joint read by a position sensor at the mean of that
// sensor's first row (less its bias, within the joint's limits), and
// the root link at the tilt of an IMU on it. Only the first row: a robot
// with backlash settles onto its screws within milliseconds. A start within
// three standard deviations of the written pose (from the sensor's noise
// and quantization) is taken to be the written pose: the replay of a robot
// that starts as its file says then starts exactly there, and the replay is
// sensitive enough to its start that the noise would show all through it.
func SetInitialPose(r *models.Robot, l *Log) {
	for _, s := range r.Sensors {
		switch {
		case s.Kind == models.JointPosition && s.Joint != "":
			j := r.Joint(s.Joint)
			if j == nil {
				continue
			}
			if v, ok := startValue(l, s.Name+".position", j.Initial+s.Bias, resolution(s)); ok {
				v -= s.Bias
				if j.HasLimits {
					v = math.Min(math.Max(v, j.Lower), j.Upper)
				}
				j.Initial = v
			}
		case s.Kind == models.IMU && s.Link == r.Root:
			root := r.Link(r.Root)
			if v, ok := startValue(l, s.Name+".tilt", root.Angle+s.Bias, resolution(s)); ok {
				root.Angle = v - s.Bias
			}
		}
	}
}

// resolution is a sensor's standard deviation of one reading: its noise and
// its quantization step over sqrt 12 (a uniform rounding error).
func resolution(s models.Sensor) float64 {
	q := 0.0
	if s.Bits > 0 && s.Bits < 63 && s.Max > s.Min {
		q = (s.Max - s.Min) / float64(uint64(1)<<s.Bits-1)
	}
	return math.Hypot(s.Noise, q/math.Sqrt(12))
}

// startValue is a column's first value, and whether it is more than three
// standard deviations from written.
func startValue(l *Log, name string, written, sigma float64) (float64, bool) {
	c := l.Column(name)
	if c == nil {
		return 0, false
	}
	return c[0], math.Abs(c[0]-written) > 3*sigma
}
