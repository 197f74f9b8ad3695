package models

import (
	"slices"
	"strings"
	"testing"
)

// TestSensorParams: the sensor paths the fit sets read and write the
// sensor the frontal file describes, with the ranges SCHEMA.md gives them:
// a latency is a whole number of samples, zero or more; a bias is an
// offset of either sign; rate_bias exists on an IMU only (its gyro).
func TestSensorParams(t *testing.T) {
	r := loadBuiltin(t, "frontal")
	// frontal.yaml writes the torso IMU with latency: 1 and no bias.
	if v, err := GetParam(r, "sensors.torso_imu.latency"); err != nil || v != 1 {
		t.Errorf("sensors.torso_imu.latency = %g, %v; frontal.yaml writes 1", v, err)
	}
	if !WholeParam(r, "sensors.torso_imu.latency") || WholeParam(r, "sensors.torso_imu.bias") {
		t.Errorf("a latency is a whole number of samples (SCHEMA.md), a bias is not")
	}
	imu := func() *Sensor {
		for i := range r.Sensors {
			if r.Sensors[i].Name == "torso_imu" {
				return &r.Sensors[i]
			}
		}
		t.Fatal("frontal has no torso_imu")
		return nil
	}
	sets := []struct {
		path string
		v    float64
		got  func() float64
	}{
		{"sensors.torso_imu.latency", 3, func() float64 { return float64(imu().Latency) }},
		{"sensors.torso_imu.bias", -0.01, func() float64 { return imu().Bias }},
		{"sensors.torso_imu.rate_bias", 0.02, func() float64 { return imu().RateBias }},
	}
	for _, s := range sets {
		if err := SetParam(r, s.path, s.v); err != nil {
			t.Errorf("%s = %g: %v", s.path, s.v, err)
		} else if s.got() != s.v {
			t.Errorf("%s = %g set the sensor to %g", s.path, s.v, s.got())
		}
	}
	// SCHEMA.md: whole samples, zero or more; the value stays as it was.
	for _, bad := range []float64{2.5, -1} {
		if err := SetParam(r, "sensors.torso_imu.latency", bad); err == nil {
			t.Errorf("latency %g taken", bad)
		}
	}
	if imu().Latency != 3 {
		t.Errorf("a refused latency changed the sensor to %d", imu().Latency)
	}
	// SCHEMA.md: rate_bias is the gyro's, imu only.
	if _, err := GetParam(r, "sensors.pot_hip_left.rate_bias"); err == nil {
		t.Errorf("a pot has a rate_bias")
	}
	if _, err := GetParam(r, "sensors.pot_hip_left.bias"); err != nil {
		t.Errorf("a pot's bias: %v", err)
	}
	if _, err := GetParam(r, "sensors.nosuch.bias"); err == nil || !strings.Contains(err.Error(), "nosuch") {
		t.Errorf("an unknown sensor: %v, want an error naming it", err)
	}
	// param.go's doc: sweeps list no sensor latency or bias; fits name them.
	if i := slices.IndexFunc(ParamPaths(r), func(p string) bool { return strings.HasPrefix(p, "sensors.torso_imu.") }); i >= 0 {
		t.Errorf("ParamPaths lists %s", ParamPaths(r)[i])
	}
}
