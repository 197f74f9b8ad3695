// Package study turns single simulations into answers. It joins the plant
// (sim) to the controller graph (control) for a robot (models), runs
// scenarios, and measures them; neither sim nor control imports it.
package study
