package control

import (
	"testing"

	"teeter/models"
)

// channelsOf lists a robot's sensor channels in the contract's order (see
// DEVELOPERS.md: per sensor in file order, imu gives tilt, rate, accel_tilt;
// joint_position gives position; foot_load gives force).
func channelsOf(r *models.Robot) []string {
	var out []string
	for _, s := range r.Sensors {
		switch s.Kind {
		case models.IMU:
			out = append(out, s.Name+".tilt", s.Name+".rate", s.Name+".accel_tilt")
		case models.JointPosition:
			out = append(out, s.Name+".position")
		case models.FootLoad:
			out = append(out, s.Name+".force")
		}
	}
	return out
}

func actuatorsOf(r *models.Robot) []string {
	var out []string
	for _, a := range r.Actuators {
		out = append(out, a.Name)
	}
	return out
}

func TestBuiltinsBuildForTheirRobots(t *testing.T) {
	for _, name := range []string{"frontal", "sagittal", "pendulum"} {
		robot, err := models.Load("builtin:" + name)
		if err != nil {
			t.Fatalf("%s robot: %v", name, err)
		}
		spec, err := Builtin(name)
		if err != nil {
			t.Fatalf("%s controller: %v", name, err)
		}
		g, err := Build(spec, channelsOf(robot), actuatorsOf(robot))
		if err != nil {
			t.Fatalf("%s controller: %v", name, err)
		}
		readings := make([]float64, len(channelsOf(robot)))
		commands := make([]float64, len(robot.Actuators))
		g.Tick(0, readings, commands)
	}
}

// frontalNames gives the built-in frontal robot's channels and actuators.
func frontalNames() ([]string, []string) {
	robot, err := models.Load("builtin:frontal")
	if err != nil {
		panic(err)
	}
	return channelsOf(robot), actuatorsOf(robot)
}
