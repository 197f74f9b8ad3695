// Package models describes a planar robot: the robot file, its schema, the
// units people write quantities in, validation with positioned problems, and
// the built-in robots embedded in the binary.
//
// Everything in a loaded model is in SI units and radians. Friendly units
// (mm, deg, mAh, ...) exist only in the files and at the edges of the program.
// The package imports nothing else of teeter's.
package models
