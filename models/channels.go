package models

// The naming rule for sensor channels and actuator commands: the order of
// the readings a controller gets and of the commands it writes. The plant,
// the controller graph and the window all follow it.

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

// ActuatorNames lists the actuators of a robot in the order of the commands
// the controller writes.
func ActuatorNames(r *Robot) []string {
	out := make([]string, len(r.Actuators))
	for i, a := range r.Actuators {
		out[i] = a.Name
	}
	return out
}
