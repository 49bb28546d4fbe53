package bench

import (
	"math"
	"os"
	"testing"
)

// suites/filters.toml names every built-in filter, parses against the
// built-in catalogue and runs (with runs cut to 3). Every filter that applies to cv2d, a linear-Gaussian
// problem, is a Gaussian filter equal to the Kalman filter there
// (DEVELOPERS.md: "every sigma-point filter equals the Kalman filter on a
// linear-Gaussian model"; the same identity is checked step by step in
// filters/filtertest.EqualsKF) and, all filters seeing the same truth and
// measurements, must have the kf's RMSE to 1e-6 relative, except the
// particle and ensemble filters (monteCarlo), which only converge to it as
// N grows (checked in filters). The kf applies to cv2d only, with a note
// elsewhere.
func TestFiltersSuite(t *testing.T) {
	data, err := os.ReadFile("suites/filters.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := ParseSuite("suites/filters.toml", data, Builtin())
	if err != nil {
		t.Fatal(err)
	}
	inSuite := map[string]bool{}
	for _, fc := range s.Filters {
		inSuite[fc.Spec.Name] = true
	}
	for _, spec := range Builtin().Filters {
		if !inSuite[spec.Name] {
			t.Errorf("suites/filters.toml does not run %s: add a [[filter]] entry for it", spec.Name)
		}
	}
	s.Runs = 3
	out, err := Run(s, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	var kfRMSE float64
	for _, p := range out.Pairs {
		if p.Problem == "cv2d" && p.Filter == "kf" {
			kfRMSE = p.Summary.RMSE
		}
	}
	if !(kfRMSE > 0) {
		t.Fatalf("kf RMSE on cv2d %v", kfRMSE)
	}
	ran := map[string]bool{}
	for _, p := range out.Pairs {
		if !p.Applicable {
			if p.Note == "" {
				t.Errorf("%s %s on %s: not applicable without a note", p.Filter, p.Config, p.Problem)
			}
			if p.Filter != "kf" {
				t.Logf("%s %s on %s: %s", p.Filter, p.Config, p.Problem, p.Note)
			}
			continue
		}
		ran[p.Filter] = true
		if p.Filter == "kf" && p.Problem != "cv2d" {
			t.Errorf("kf applies to %s", p.Problem)
		}
		t.Logf("%-8s %-20s %-5s RMSE %.4g  ANEES %.3g  diverged %d  %.0f ns/step", p.Filter, p.Config, p.Problem,
			p.Summary.RMSE, p.Summary.ANEES, p.Summary.Diverged, p.Summary.NsPerStep)
		if p.Problem != "cv2d" {
			continue
		}
		if p.Summary.Diverged != 0 {
			t.Errorf("%s %s on cv2d: %d runs diverged", p.Filter, p.Config, p.Summary.Diverged)
		}
		if !monteCarlo[p.Filter] && math.Abs(p.Summary.RMSE-kfRMSE) > 1e-6*kfRMSE {
			t.Errorf("%s %s on cv2d: RMSE %.10g, kf %.10g", p.Filter, p.Config, p.Summary.RMSE, kfRMSE)
		}
	}
	for name := range inSuite {
		if !ran[name] {
			t.Errorf("%s ran on no problem of the suite", name)
		}
	}
}

// monteCarlo names the particle and ensemble filters of the catalogue.
var monteCarlo = map[string]bool{"pf": true, "apf": true, "rpf": true, "enkf": true}
