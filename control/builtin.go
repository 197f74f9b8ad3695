package control

import (
	"embed"
	"fmt"
	"strings"

	"teeter/models"
)

//go:embed builtin/*.yaml
var builtinFS embed.FS

// BuiltinNames lists the built-in controllers, one per built-in robot.
func BuiltinNames() []string { return models.EmbeddedNames(builtinFS, "builtin") }

// BuiltinSource returns the file text of a built-in controller.
func BuiltinSource(name string) ([]byte, error) {
	data, err := builtinFS.ReadFile("builtin/" + name + ".yaml")
	if err != nil {
		return nil, fmt.Errorf("no built-in controller %q (there are %s)", name, strings.Join(BuiltinNames(), ", "))
	}
	return data, nil
}

// Builtin reads the built-in controller for the built-in robot of that name.
func Builtin(name string) (*Spec, error) {
	data, err := BuiltinSource(name)
	if err != nil {
		return nil, err
	}
	return ParseBytes("builtin:"+name+".controller", data)
}
