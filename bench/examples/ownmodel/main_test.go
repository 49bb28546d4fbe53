package main

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/estbench/estbench/results"
)

// The U.S. Standard Atmosphere 1976 (NOAA, NASA and USAF, 1976) tabulates
// the pressure at geopotential altitudes; the values below are from memory
// of its table (rounded to 0.1 Pa) and agree with the formula to 1 Pa.
func TestPressureAgainstStandardAtmosphere(t *testing.T) {
	for _, tc := range []struct{ h, pa float64 }{
		{0, 101325.0},
		{500, 95460.8},
		{1000, 89874.6},
		{2000, 79495.2},
	} {
		if got := Pressure(tc.h); math.Abs(got-tc.pa) > 1 {
			t.Errorf("Pressure(%v) = %.1f Pa, want %.1f", tc.h, got, tc.pa)
		}
	}
}

// The analytic Jacobians agree with central differences (step 1e-3 m in
// altitude: the truncation error of dp/dh is about h²/6 · p”' ~ 1e-12 of
// dp/dh, the rounding error about 1e-16 · p / 1e-3 ~ 1e-8 Pa/m).
func TestDroneJacobians(t *testing.T) {
	p, err := NewDrone(DroneConfig{})
	if err != nil {
		t.Fatal(err)
	}
	m := &p.Model
	for _, x := range [][]float64{{0, 0}, {35, 2}, {120, -0.5}, {2500, 1}} {
		for _, k := range []int{1, 100, 200} {
			a, fp, fm := make([]float64, 4), make([]float64, 2), make([]float64, 2)
			m.FJac(a, x, k)
			for j := 0; j < 2; j++ {
				xp, xm := []float64{x[0], x[1]}, []float64{x[0], x[1]}
				xp[j] += 1e-3
				xm[j] -= 1e-3
				m.F(fp, xp, k)
				m.F(fm, xm, k)
				for i := 0; i < 2; i++ {
					if d := (fp[i] - fm[i]) / 2e-3; math.Abs(d-a[i*2+j]) > 1e-9 {
						t.Errorf("x=%v k=%d: dF%d/dx%d = %v, central difference %v", x, k, i, j, a[i*2+j], d)
					}
				}
			}
			c, hp, hm := make([]float64, 2), make([]float64, 1), make([]float64, 1)
			m.HJac(c, x, k)
			m.H(hp, []float64{x[0] + 1e-3, x[1]}, k)
			m.H(hm, []float64{x[0] - 1e-3, x[1]}, k)
			if d := (hp[0] - hm[0]) / 2e-3; math.Abs(d-c[0]) > 1e-6*math.Abs(c[0]) || c[1] != 0 {
				t.Errorf("x=%v: dH/dx = %v, central difference [%v 0]", x, c, d)
			}
		}
	}
}

// The model's functions allocate nothing.
func TestDroneNoAllocs(t *testing.T) {
	p, _ := NewDrone(DroneConfig{})
	m := &p.Model
	x, dst, z, a, c := []float64{10, 1}, make([]float64, 2), make([]float64, 1), make([]float64, 4), make([]float64, 2)
	if n := testing.AllocsPerRun(100, func() {
		m.F(dst, x, 3)
		m.H(z, x, 3)
		m.FJac(a, x, 3)
		m.HJac(c, x, 3)
	}); n != 0 {
		t.Errorf("model functions allocate %v times", n)
	}
}

func runMain(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var o, e bytes.Buffer
	code := run(args, &o, &e)
	return code, o.String(), e.String()
}

// The program runs its embedded suite: the drone problem from the
// extended catalogue, twice, with every filter applicable. The error of
// the altitude, whose only information is the pressure, is below what the
// barometer alone gives: σ_p / |dp/dh| at the survey altitude, about
// 12 Pa / 11.9 Pa/m ≈ 1 m for the default barometer, 3.4 m for the noisy
// one (from the Jacobian of the standard atmosphere near 120 m).
func TestRunEmbeddedSuite(t *testing.T) {
	dir := t.TempDir()
	code, out, errOut := runMain(t, "-runs", "4", "-workers", "2", "-format", "csv", "-out", dir)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	// The result folder reads back as estbench's do (estbench compare and
	// report use this reader).
	d, err := results.ReadResultDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if d.Manifest.Tool != "ownmodel" || d.Manifest.Suite != "survey-drone-baro" || len(d.Summary) != 6 || len(d.Runs) != 6*4 {
		t.Errorf("result folder: manifest %+v, %d summary rows, %d runs rows", d.Manifest, len(d.Summary), len(d.Runs))
	}
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("output is not CSV: %v\n%s", err, out)
	}
	if strings.Join(recs[0], ",") != strings.Join(results.SummaryColumns, ",") {
		t.Fatalf("header %v", recs[0])
	}
	col := map[string]int{}
	for i, c := range recs[0] {
		col[c] = i
	}
	if len(recs) != 1+2*3 {
		t.Fatalf("%d rows, want 2 problems x 3 filters", len(recs)-1)
	}
	limit := map[string]float64{"drone-baro": 12 / 11.9, "drone-baro(sigma_p=40)": 40 / 11.9}
	for _, r := range recs[1:] {
		bound, ok := limit[r[col["problem"]]]
		if !ok {
			t.Fatalf("unexpected problem %q", r[col["problem"]])
		}
		rmse, err := strconv.ParseFloat(r[col["rmse"]], 64)
		if err != nil || r[col["runs"]] != "4" || !(rmse > 0 && rmse < bound) {
			t.Errorf("%s %s: runs %s, rmse %q; want 4 runs, 0 < rmse < %.2f", r[col["problem"]], r[col["filter"]], r[col["runs"]], r[col["rmse"]], bound)
		}
	}
}

// A suite naming the drone with a typo is bad input: exit 2, with the line
// and the nearest name; a suite file may also define models by expressions
// next to the drone.
func TestRunOwnSuite(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(bad, []byte("name = \"x\"\n[[problem]]\nuse = \"drone-bar\"\n[[filter]]\nuse = \"ekf\"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := runMain(t, "-suite", bad, "-out", filepath.Join(dir, "out-bad"))
	if code != exitUsage || out != "" || !strings.Contains(errOut, bad+`:3: problem: unknown problem "drone-bar" (did you mean "drone-baro"?)`) {
		t.Fatalf("exit %d, stdout %q, stderr %q", code, out, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "out-bad")); !os.IsNotExist(err) {
		t.Error("result folder created for a bad suite")
	}
	good := filepath.Join(dir, "good.toml")
	err := os.WriteFile(good, []byte(`name = "drone-and-expr"
runs = 3
[[problem]]
use = "drone-baro"
steps = 40
[[problem]]
model = "expr"
name = "drone-linear-baro"
states = ["h", "v"]
measurements = ["p"]
transition = ["h + dt*v", "v"]
measurement = ["101325 - 12*h"]
process_noise = [[0.0015625, 0.00625], [0.00625, 0.025]]
measurement_noise = [144]
prior_cov = [4, 0.25]
steps = 40
dt = 0.5
[[filter]]
use = "kf"
[[filter]]
use = "ekf"
`), 0o644)
	if err != nil {
		t.Fatal(err)
	}
	code, out, errOut = runMain(t, "-suite", good, "-format", "csv", "-out", filepath.Join(dir, "out-good"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"drone-baro(steps=40),ekf,", "drone-linear-baro,kf,", "drone-linear-baro,ekf,", "kf needs a linear model; drone-baro(steps=40) is nonlinear"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}
