package models

import (
	"reflect"
	"testing"
)

func TestChannelUnits(t *testing.T) {
	// The units a sensor reads are those its noise is written in in the
	// built-in files (a pot on a pin in deg, on a slide or the ballast in
	// mm, a pad's load in N), and an IMU gives tilt, gyro rate and the
	// accelerometer's tilt (DEVELOPERS.md, the channel table).
	want := map[string][]string{
		"sagittal": {"rad", "rad/s", "rad", "rad", "rad", "rad", "m", "N", "N"},
		"frontal": {"rad", "rad/s", "rad", "rad", "rad/s", "rad", "rad", "rad/s", "rad",
			"rad", "rad", "rad", "rad", "m", "m", "N", "N", "N", "N"},
	}
	for name, units := range want {
		r := loadBuiltin(t, name)
		got := ChannelUnits(r)
		if len(got) != len(Channels(r)) {
			t.Fatalf("%s: %d units for %d channels", name, len(got), len(Channels(r)))
		}
		if !reflect.DeepEqual(got, units) {
			t.Errorf("%s: units %v, want %v (channels %v)", name, got, units, Channels(r))
		}
	}
}
