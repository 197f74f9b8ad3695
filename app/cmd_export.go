package main

import (
	"bytes"
	"fmt"
	"io"

	"teeter/control"
	"teeter/models"
)

func init() {
	commands = append(commands, command{"export", "print or write a gain set as JSON, YAML or a C header for firmware", cmdExport})
}

func cmdExport(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("export", stderr)
	rf := addRigFlags(fs)
	format := fs.String("format", "c-header", "json, yaml or c-header")
	out := fs.String("out", "", "write to this file instead of standard output")
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
	var data []byte
	switch *format {
	case "json":
		data = control.MarshalGainsJSON(g.Gains())
	case "yaml":
		data = control.MarshalGainsYAML(g.Gains())
	case "c-header", "c":
		data = g.CHeader(source)
	default:
		return usageError{fmt.Errorf("--format %q: want json, yaml or c-header", *format)}
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
