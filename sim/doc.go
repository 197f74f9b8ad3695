// Package sim is the plant: a planar robot built from a models.Robot on the
// cp rigid-body engine, with lead-screw actuators and their backlash, sensors
// with noise and latency, compliant foot pads, ballast, a battery,
// disturbances, fall and blow-up detection, and a recorder of every signal.
//
// The plant knows nothing of how it is controlled: it calls a Controller at
// the controller rate with the latest sensor readings and applies the
// commands it returns. The control package's graphs satisfy Controller, and
// the glue between the two lives outside both.
package sim
