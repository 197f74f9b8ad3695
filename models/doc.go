// Package models is the one description of a planar robot that the plant,
// the controller graph and the window share: the robot file, its schema, the
// units people write quantities in, validation with positioned problems, the
// naming rules, and the built-in robots embedded in the binary.
//
// A robot file is YAML (see SCHEMA.md beside this file for every field):
// top-level name, plane (frontal or sagittal) and root, then lists of links
// (shape, mass), joints (revolute or prismatic, parent and child anchors,
// initial position, limits), actuators (lead screws or torque motors on a
// joint, on the ballast slide, or between two points on two links), sensors
// (imu, joint_position, foot_load), feet with compliant pads, and optional
// ballast, battery, ground, fall and controller sections. Quantities carry
// units ("12 mm", "0.5 deg", "30 mm/s", "4 N*s/m"); bare numbers are SI.
// Points are lists such as [0, 120 mm].
//
// Load reads a file or "builtin:NAME" (BuiltinNames lists them); Parse reads
// bytes. Every problem is reported at once as Problems, each with file, line,
// column and a field path such as links.torso.mass. Save writes a model back
// in bare SI numbers that read back exactly. GetParam and SetParam address
// single numbers for sweeps; InitialPoses places the links in the starting
// configuration with the feet on the ground. ValidName is the rule every
// name of a robot part (and of a controller block) follows; Channels and
// ActuatorNames give the names and order of the readings a controller gets
// and of the commands it writes.
//
// Everything in a loaded model is in SI units and radians. Friendly units
// (mm, deg, mAh, ...) exist only in the files and at the edges of the program.
// The package imports nothing else of teeter's.
package models
