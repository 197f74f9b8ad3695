package models

// The robot model. Frames: every link has its own frame; x points right
// (frontal plane) or forward (sagittal plane), y points up. World y = 0 is the
// ground surface at x = 0. All values are SI: metres, kilograms, seconds,
// radians, newtons, volts, amperes, coulombs, ohms.

// Plane is the plane a planar robot lives in.
type Plane string

const (
	Frontal  Plane = "frontal"  // seen from the front: roll joints, sideways sway
	Sagittal Plane = "sagittal" // seen from the side: pitch joints, rocking front to back
)

// Vec2 is a point or direction in a plane, in metres where it is a point.
type Vec2 struct{ X, Y float64 }

// Robot is a planar robot: a tree of rigid links joined by joints, with
// actuators, sensors, feet, ballast, a battery, the ground it stands on and,
// optionally, the controller graph that keeps it up.
type Robot struct {
	Name        string
	Plane       Plane
	Description string
	// Root is the link whose pose is given; the others follow from the
	// joints' initial positions. The root is placed so that the lowest pad
	// rests on the ground.
	Root      string
	Links     []Link
	Joints    []Joint
	Actuators []Actuator
	Sensors   []Sensor
	Feet      []Foot
	Ballast   *Ballast // optional
	Battery   *Battery // optional; without one the actuators see their nominal voltage
	Ground    Ground
	Fall      FallLimits
	// PhysicsRate is the physics step rate, Hz; 0 leaves it to whoever
	// runs the robot (1 kHz unless told).
	PhysicsRate float64
	// NoiseScale multiplies the noise of every sensor (1 = as written), so a
	// study can sweep sensor quality with one number.
	NoiseScale float64
	// Controller is the controller section as written; the control package
	// interprets it. Nil when the file has none.
	Controller *Value
	// Source is the file the robot came from ("builtin:frontal" for a built-in).
	Source string
	// Pos records where each named element and field was written, keyed by
	// field path, so that later checks (a controller naming a missing sensor,
	// say) can point at the file.
	Pos map[string]Pos
}

// ShapeKind is the kind of a link's collision and mass shape.
type ShapeKind string

const (
	Box     ShapeKind = "box"
	Capsule ShapeKind = "capsule"
	Circle  ShapeKind = "circle"
)

// Shape is the geometry of a link in its own frame.
type Shape struct {
	Kind   ShapeKind
	Width  float64 // box: along x
	Height float64 // box: along y
	Length float64 // capsule: distance between the two end centres, along y
	Radius float64 // capsule and circle
	Center Vec2    // centre of the shape in the link frame
}

// Link is one rigid body.
type Link struct {
	Name  string
	Shape Shape
	Mass  float64
	// Inertia about the centre of mass; zero means computed from the shape
	// as a uniform body.
	Inertia float64
	// COM is the centre of mass in the link frame; nil means the shape centre.
	COM *Vec2
	// Position and Angle place the root link (Position.Y is adjusted so the
	// robot stands on the ground unless the root is fixed); ignored for
	// other links.
	Position Vec2
	Angle    float64
	// Fixed welds the link to the world at its Position and Angle (the root
	// only): a pendulum's pivot, a servo bench. A robot with a fixed root
	// needs no feet.
	Fixed bool
}

// JointKind is revolute (a pin) or prismatic (a slide).
type JointKind string

const (
	Revolute  JointKind = "revolute"
	Prismatic JointKind = "prismatic"
)

// Joint joins a child link to its parent.
type Joint struct {
	Name         string
	Kind         JointKind
	Parent       string
	Child        string
	ParentAnchor Vec2 // in the parent frame
	ChildAnchor  Vec2 // in the child frame
	// Axis is the slide direction of a prismatic joint in the parent frame
	// (unit length after loading). The joint position is the displacement of
	// the child anchor from the parent anchor along it.
	Axis Vec2
	// Initial is the joint position at the start: the child's angle relative
	// to the parent (revolute, rad) or the displacement (prismatic, m).
	Initial float64
	// Lower and Upper limit the joint position when HasLimits is set.
	Lower, Upper float64
	HasLimits    bool
	Stiffness    float64 // passive spring towards Initial: N*m/rad or N/m
	Damping      float64 // passive viscous damping: N*m*s/rad or N*s/m
	Friction     float64 // passive Coulomb friction: N*m or N
	RatedLoad    float64 // N: the reaction force the joint is built for; 0 is not given
}

// ActuatorKind is the drive type.
type ActuatorKind string

const (
	// LeadScrew is a motor driving a screw: speed set by PWM, not backdrivable.
	LeadScrew ActuatorKind = "lead_screw"
	// TorqueMotor is a backdrivable motor whose PWM sets force or torque.
	TorqueMotor ActuatorKind = "torque_motor"
)

// Attachment is a point on a link.
type Attachment struct {
	Link  string
	Point Vec2 // in the link frame
}

// Actuator drives exactly one of: a joint's own coordinate (rotary for a
// revolute joint, linear for a prismatic one), the ballast slide, or the
// distance between two points on two links (a linear actuator pushing on a
// lever, the usual way a lead screw turns a hip or ankle).
type Actuator struct {
	Name    string
	Kind    ActuatorKind
	Joint   string      // drive this joint's coordinate
	Ballast bool        // drive the ballast slide
	From    *Attachment // linear actuator between From and To
	To      *Attachment

	// Linear reports whether the actuator's position is a length (m) rather
	// than an angle (rad). Set when loading.
	Linear bool

	NominalVoltage float64 // V at which NoLoadSpeed is measured
	NoLoadSpeed    float64 // m/s or rad/s at full PWM and nominal voltage
	StallForce     float64 // N or N*m: the load at which a lead screw stops; a torque motor's peak
	RatedLoad      float64 // N or N*m: the load the actuator is built to carry; 0 is not given
	Deadband       float64 // PWM magnitude (0..1) below which the motor does not turn
	TimeConstant   float64 // s, first-order motor lag
	StrokeMin      float64 // screw position limits, m or rad (for From/To: actuator length)
	StrokeMax      float64
	Backlash       float64 // total free play b, m or rad: output free within +-b/2 of the screw
	MountStiffness float64 // N/m or N*m/rad in series with the screw; 0 means rigid
	NoLoadCurrent  float64 // A drawn at full speed and no load
	StallCurrent   float64 // A drawn at stall
}

// SensorKind is the kind of a sensor.
type SensorKind string

const (
	IMU           SensorKind = "imu"            // tilt, angular rate and accelerometer tilt of a link
	JointPosition SensorKind = "joint_position" // potentiometer on a joint or actuator
	FootLoad      SensorKind = "foot_load"      // normal force on one pad
)

// Sensor is sampled at its own rate, with seeded noise, a bias and a latency.
type Sensor struct {
	Name     string
	Kind     SensorKind
	Link     string  // imu
	Joint    string  // joint_position on a joint
	Actuator string  // joint_position reading an actuator's output position
	Pad      string  // foot_load: the pad's name
	Rate     float64 // Hz
	Latency  int     // whole samples of delay
	Noise    float64 // standard deviation: rad (imu tilt), m or rad (position), N (load)
	Bias     float64 // constant offset in the same unit
	// IMU only.
	RateNoise float64 // rad/s, gyro noise
	RateBias  float64 // rad/s, gyro bias
	// Potentiometer only: readings are quantized to Bits over [Min, Max].
	Bits     int
	Min, Max float64
}

// Foot is a link that touches the ground through compliant pads.
type Foot struct {
	Name string
	Link string
	Pads []Pad
}

// Pad is a small body on a groove under the foot, pushed out by a damped
// spring, with a hard end stop after its free travel.
type Pad struct {
	Name      string
	Position  Vec2    // pad centre at rest (fully extended), in the foot frame
	Width     float64 // contact width
	Thickness float64
	Mass      float64
	Stiffness float64 // N/m
	Damping   float64 // N*s/m
	Travel    float64 // free travel before the end stop, m
	Friction  float64 // coefficient against the ground
}

// Ballast is a mass on a straight slide fixed to a link, at a fixed
// position or moved by an actuator (one whose Ballast field is set).
type Ballast struct {
	Name     string
	Link     string
	Mass     float64
	Origin   Vec2    // slide origin in the link frame
	Axis     Vec2    // slide direction in the link frame, unit length after loading
	Position float64 // along the slide from Origin, m (initial, or fixed)
	Min, Max float64 // slide travel
	Size     float64 // edge of the square drawn and collided, m
}

// Battery feeds the actuators.
type Battery struct {
	FullVoltage        float64 // open-circuit voltage when full, V
	EmptyVoltage       float64 // open-circuit voltage when empty, V
	Capacity           float64 // charge, C
	InitialCharge      float64 // fraction of Capacity at the start, 0..1
	InternalResistance float64 // ohm
}

// Ground is the floor.
type Ground struct {
	Friction float64
	Tilt     float64 // rad, positive lifts the +x side
	// StepX and StepHeight put a step in the ground: for x > StepX the
	// surface is StepHeight higher. StepHeight zero means no step.
	StepX      float64
	StepHeight float64
}

// FallLimits say when the robot counts as fallen.
type FallLimits struct {
	MaxTilt   float64 // rad of torso tilt from upright
	TorsoLink string  // the link whose tilt is watched; defaults to the root
}
