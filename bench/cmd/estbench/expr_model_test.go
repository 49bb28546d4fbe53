package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// exprSuite defines its one problem by expressions (README, "Models
// defined in the suite file"): a harbour launch's speed decaying to a
// cruise speed, measured directly.
const exprSuite = `
name = "launch-expr"
runs = 3
[[problem]]
model = "expr"
name = "launch-speed"
states = ["v"]
measurements = ["log"]
params = { cruise = 6.0, tau = 20.0 }
transition = ["v + dt*(cruise - v)/tau"]
measurement = ["v"]
process_noise = [0.01]
measurement_noise = [0.25]
prior_mean = [2.0]
prior_cov = [1.0]
steps = 30
[[filter]]
use = "kf"
[[filter]]
use = "ukf"
`

// An expression model runs through the CLI like a catalogue problem; being
// affine in its state, kf applies.
func TestRunExpressionModel(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	code, out, errOut := runCLI(t, "run", "--suite", writeSuite(t, exprSuite), "--out", dir, "--format", "csv")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"\nlaunch-speed,kf,,3,0,", "\nlaunch-speed,ukf,,3,0,"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

// A mistake in an expression is bad input: exit 2, the file, line,
// expression and hint on stderr, and nothing written.
func TestRunBadExpressionExits2(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	bad := strings.Replace(exprSuite, "(cruise - v)/tau", "(crusie - v)/tau", 1)
	path := writeSuite(t, bad)
	code, out, errOut := runCLI(t, "run", "--suite", path, "--out", dir)
	want := path + `:10: problem "launch-speed": transition of v, "v + dt*(crusie - v)/tau": unknown name "crusie" at column 9 (did you mean "cruise"?)`
	if code != exitUsage || out != "" || !strings.Contains(errOut, want) {
		t.Fatalf("exit %d, stdout %q, stderr %q; want exit %d and %s", code, out, errOut, exitUsage, want)
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Fatal("output directory created for a bad suite")
	}
}
