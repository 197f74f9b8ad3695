package sim

// Controller keeps the robot up. The plant calls Tick at the controller rate.
//
// readings holds one value per sensor channel, in the order of Channels for
// the robot; commands holds one value per actuator, in the order of
// ActuatorNames, each in [-1, 1] (PWM duty for a lead screw, fraction of peak
// for a torque motor). Tick must not keep either slice and should not
// allocate: it runs in the hot loop.
type Controller interface {
	// Reset returns the controller to its initial state, as at power-on.
	Reset()
	// Tick computes commands from readings at simulated time now (s).
	Tick(now float64, readings, commands []float64)
}

// SignalSource is implemented by a controller that exposes internal signals
// (block outputs) for the recorder and the window's traces.
type SignalSource interface {
	SignalNames() []string
	// Signals writes the current value of each signal into dst, in the order
	// of SignalNames. It must not allocate.
	Signals(dst []float64)
}
