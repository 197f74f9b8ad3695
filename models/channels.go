package models

// The naming rules: which names a robot's and a controller's parts may take,
// and the names and order of the sensor channels a controller reads and of
// the actuator commands it writes. The plant, the controller graph and the
// window all follow them.

// Channels lists the sensor channel names of a robot, in the order of the
// readings the controller gets: for each sensor in file order, its
// channels (imu: NAME.tilt, NAME.rate, NAME.accel_tilt; joint_position:
// NAME.position; foot_load: NAME.force).
func Channels(r *Robot) []string {
	var out []string
	for _, s := range r.Sensors {
		switch s.Kind {
		case IMU:
			out = append(out, s.Name+".tilt", s.Name+".rate", s.Name+".accel_tilt")
		case JointPosition:
			out = append(out, s.Name+".position")
		case FootLoad:
			out = append(out, s.Name+".force")
		}
	}
	return out
}

// ChannelUnits gives the SI unit of each of Channels' channels, in the same
// order: rad for a tilt or an angle, rad/s for a gyro, m for a length, N for
// a force. A joint_position sensor reads its joint's coordinate, or the
// output of its actuator.
func ChannelUnits(r *Robot) []string {
	var out []string
	for _, s := range r.Sensors {
		switch s.Kind {
		case IMU:
			out = append(out, "rad", "rad/s", "rad")
		case JointPosition:
			out = append(out, positionUnit(r, &s))
		case FootLoad:
			out = append(out, "N")
		}
	}
	return out
}

func positionUnit(r *Robot, s *Sensor) string {
	for _, j := range r.Joints {
		if s.Joint != "" && j.Name == s.Joint && j.Kind == Revolute {
			return "rad"
		}
	}
	for _, a := range r.Actuators {
		if s.Actuator != "" && a.Name == s.Actuator && !a.Linear {
			return "rad"
		}
	}
	return "m"
}

// ActuatorNames lists the actuators of a robot in the order of the commands
// the controller writes.
func ActuatorNames(r *Robot) []string {
	out := make([]string, len(r.Actuators))
	for i, a := range r.Actuators {
		out[i] = a.Name
	}
	return out
}

// NameRule says in words which names ValidName accepts, for problem texts.
const NameRule = "a letter or '_' followed by letters, digits, '_' or '-'"

// ValidName reports whether s can name a part of a robot (a link, joint,
// actuator, sensor, foot, pad or the ballast) or of a controller (a block,
// an output, a state or an event). Dots are kept out because they join a
// name to what follows in a channel (torso_imu.tilt) or a parameter path
// (links.torso.mass); a name cannot start with a digit or '-' so that it is
// never read as a number where a number could stand instead.
func ValidName(s string) bool {
	if s == "" {
		return false
	}
	for i, c := range s {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c == '_':
		case (c >= '0' && c <= '9') || c == '-':
			if i == 0 {
				return false
			}
		default:
			return false
		}
	}
	return true
}
