package control

import (
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"testing"
)

// FuzzCGen writes the C module of fuzzed controller files and checks that
// every one that parses and builds for the frontal robot compiles under
// cFlags, whatever the file's names and numbers and whatever text names
// the sources in the header comment: nothing in them may inject code. Only
// inputs that build reach gcc, and gcc only checks (-fsyntax-only, with
// every warning an error), so an iteration costs a few hundredths of a
// second at most; without gcc the target checks only that writing the
// module does not fail.
func FuzzCGen(f *testing.F) {
	for _, name := range BuiltinNames() {
		data, _ := BuiltinSource(name)
		f.Add(data, "builtin:"+name)
	}
	for _, file := range []string{"../testdata/good_controller.yaml", "testdata/cgen/every_kind.yaml"} {
		if data, err := os.ReadFile(file); err == nil {
			f.Add(data, file)
		}
	}
	f.Add([]byte("rate: 100 Hz\nblocks:\n  - {name: t, kind: time}\n"), "*/ int injected; /* ??/\n#error")
	f.Add([]byte("rate: 1 Hz\nblocks: []\n"), "\"\\\x00\xff")
	base := loadCRig(f, "fuzz", "frontal", nil)
	gcc, _ := exec.LookPath("gcc")
	f.Fuzz(func(t *testing.T, data []byte, source string) {
		spec, err := ParseBytes("f.yaml", data)
		if err != nil {
			return
		}
		g, err := Build(spec, base.opt.Channels, base.opt.Actuators)
		if err != nil {
			return
		}
		opt := base.opt
		opt.Robot, opt.Controller, opt.Gains = source, source, source
		dir := t.TempDir()
		if err := g.WriteC(dir, opt); err != nil {
			t.Fatal(err)
		}
		if gcc == "" {
			return
		}
		args := append(slices.Clone(cFlags), "-fsyntax-only", filepath.Join(dir, CSourceFile))
		if out, err := exec.Command(gcc, args...).CombinedOutput(); err != nil {
			t.Fatalf("the module does not compile: %v\n%s", err, out)
		}
	})
}
