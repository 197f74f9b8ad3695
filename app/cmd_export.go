package main

import (
	"bytes"
	"fmt"
	"io"

	"teeter/control"
	"teeter/models"
)

func init() {
	commands = append(commands, command{"export", "print or write a gain set as JSON, YAML or a C header, or the whole controller as a C module, for firmware", cmdExport})
}

func cmdExport(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("export", stderr)
	rf := addRigFlags(fs)
	format := fs.String("format", "c-header", "json, yaml, c-header, or c (the controller as a C99 module, written into the --out directory)")
	out := fs.String("out", "", "write to this file instead of standard output (with --format c: the directory)")
	cReal := fs.String("c-real", "float", "with --format c: the module's number type, float or double")
	withMain := fs.Bool("sil", false, "with --format c: also write "+control.SILMainFile+", a main that runs the module as a program for run --controller-exec")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	g, err := r.Controller()
	if err != nil {
		return err
	}
	if g == nil {
		return fmt.Errorf("robot %s has no controller graph to export", *rf.model)
	}
	source := *rf.model
	if *rf.gains != "" {
		source += " with gains from " + *rf.gains
	}
	if *format == "c" {
		if err := exportC(g, r.Robot, rf, *out, *cReal); err != nil || !*withMain {
			return err
		}
		return control.WriteSILMain(*out)
	}
	if *withMain {
		return usageError{fmt.Errorf("--sil goes with --format c")}
	}
	var data []byte
	switch *format {
	case "json":
		data = control.MarshalGainsJSON(g.Gains())
	case "yaml":
		data = control.MarshalGainsYAML(g.Gains())
	case "c-header":
		data = g.CHeader(source)
	default:
		return usageError{fmt.Errorf("--format %q: want json, yaml, c-header or c", *format)}
	}
	if *out == "" {
		_, err := stdout.Write(data)
		return err
	}
	return models.WriteFileAtomic(*out, func(w io.Writer) error {
		_, err := io.Copy(w, bytes.NewReader(data))
		return err
	})
}

// exportC writes the controller graph as a C module into dir.
func exportC(g *control.Graph, robot *models.Robot, rf rigFlags, dir, real string) error {
	if dir == "" {
		return usageError{fmt.Errorf("--format c writes two files: give the directory with --out")}
	}
	if real != "float" && real != "double" {
		return usageError{fmt.Errorf("--c-real %q: want float or double", real)}
	}
	opt := control.COptions{
		Double:     real == "double",
		Channels:   models.Channels(robot),
		Units:      models.ChannelUnits(robot),
		Actuators:  models.ActuatorNames(robot),
		Robot:      *rf.model,
		Controller: *rf.controller,
		Gains:      *rf.gains,
	}
	if opt.Controller == "" {
		opt.Controller = "the robot's own"
	}
	if opt.Gains == "" {
		opt.Gains = "the controller's own values"
	}
	return g.WriteC(dir, opt)
}
