package filters_test

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/estbench/estbench/filters"
)

// The Nile series lives outside the project, in the shared datasets folder
// beside it (../shared/datasets from the project root; this test runs in
// filters/).
var nilePath = filepath.Join("..", "..", "shared", "datasets", "nile", "nile.csv")

// Local level model of the Nile flow series (Durbin & Koopman 2012, "Time
// Series Analysis by State Space Methods", 2nd ed., ch. 2) with their ML
// estimates σ²_ε = 15099 (irregular, measurement) and σ²_η = 1469.1 (level).
const (
	nileSigma2Eps = 15099.0
	nileSigma2Eta = 1469.1
	nileA1        = 0.0 // predicted mean of the level at t = 1
	nileP1        = 1e7 // its variance: a large-variance stand-in for a diffuse prior
)

// nileFixture is filters/testdata/nile_fixtures.csv, written by
// testdata/gen_nile_fixtures.py with Debian's python3-statsmodels
// (UnobservedComponents 'llevel', known initialisation a_1 = 0, P_1 = 1e7).
type nileFixture struct {
	sha256  string      // of the nile.csv the fixture was made from
	loglik  float64     // total log-likelihood of the 100 observations
	rows    [][]float64 // pred_mean, pred_var, filt_mean, filt_var, innov_var, loglik_t
	columns []string
}

func readNileFixture(t *testing.T) nileFixture {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "nile_fixtures.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var fx nileFixture
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		s := sc.Text()
		if rest, ok := strings.CutPrefix(s, "# input: nile.csv sha256 "); ok {
			fx.sha256 = rest
			continue
		}
		if rest, ok := strings.CutPrefix(s, "# loglik: "); ok {
			if fx.loglik, err = strconv.ParseFloat(rest, 64); err != nil {
				t.Fatalf("nile_fixtures.csv:%d: loglik: %v", line, err)
			}
			continue
		}
		if strings.HasPrefix(s, "#") {
			continue
		}
		fields := strings.Split(s, ",")
		if fx.columns == nil {
			fx.columns = fields
			continue
		}
		if len(fields) != 8 {
			t.Fatalf("nile_fixtures.csv:%d: %d fields, want 8", line, len(fields))
		}
		row := make([]float64, 6)
		for i := range row {
			if row[i], err = strconv.ParseFloat(fields[i+2], 64); err != nil {
				t.Fatalf("nile_fixtures.csv:%d: %s: %v", line, fx.columns[i+2], err)
			}
		}
		fx.rows = append(fx.rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if fx.sha256 == "" || fx.loglik == 0 || len(fx.rows) != 100 {
		t.Fatalf("nile_fixtures.csv: incomplete (sha256 %q, loglik %v, %d rows)", fx.sha256, fx.loglik, len(fx.rows))
	}
	return fx
}

// readNile returns the flow column of the shared Nile dataset and the sha256
// of the file; it skips the test when the dataset is absent, unless CI=true.
func readNile(t *testing.T) ([]float64, string) {
	t.Helper()
	b, err := os.ReadFile(nilePath)
	if errors.Is(err, fs.ErrNotExist) {
		if os.Getenv("CI") == "true" {
			t.Fatalf("shared dataset %s is absent (it must be present in CI)", nilePath)
		}
		t.Skipf("shared dataset %s is absent; skipping the Nile reference test", nilePath)
	}
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(b)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if lines[0] != "year,flow" {
		t.Fatalf("%s:1: header %q, want year,flow", nilePath, lines[0])
	}
	var y []float64
	for i, l := range lines[1:] {
		_, v, ok := strings.Cut(l, ",")
		if !ok {
			t.Fatalf("%s:%d: want year,flow", nilePath, i+2)
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("%s:%d: flow: %v", nilePath, i+2, err)
		}
		y = append(y, f)
	}
	return y, hex.EncodeToString(sum[:])
}

// The Kalman filter on the local level model reproduces statsmodels'
// filter (Debian python3-statsmodels 0.13.5, fixture from
// testdata/gen_nile_fixtures.py) on the Nile series: predicted and filtered
// means and variances, innovation variances and the log-likelihood, each to
// 1e-8 relative.
//
// Initialisation: statsmodels' known initialisation gives the predicted
// state at t = 1, a_1 = 0 and P_1 = 1e7. Our filter's prior is at step 0 and
// Predict(1) comes before the first Update, so the prior is x_0 = a_1 and
// P_0 = P_1 - σ²_η, which Predict(1) (P = P_0 + Q for a random walk) turns
// into P_1.
func TestKFNileLocalLevel(t *testing.T) {
	y, digest := readNile(t)
	fx := readNileFixture(t)
	if digest != fx.sha256 {
		t.Fatalf("%s has sha256 %s, but the fixture was made from %s", nilePath, digest, fx.sha256)
	}
	if len(y) != len(fx.rows) {
		t.Fatalf("%d observations, fixture has %d rows", len(y), len(fx.rows))
	}

	m := &filters.Model{
		Nx: 1, Nz: 1,
		F:      func(dst, x []float64, _ int) { dst[0] = x[0] },
		H:      func(dst, x []float64, _ int) { dst[0] = x[0] },
		FJac:   func(dst, _ []float64, _ int) { dst[0] = 1 },
		HJac:   func(dst, _ []float64, _ int) { dst[0] = 1 },
		Q:      []float64{nileSigma2Eta},
		R:      []float64{nileSigma2Eps},
		Linear: true,
	}
	kf, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if err := kf.Reset([]float64{nileA1}, []float64{nileP1 - nileSigma2Eta}, nil); err != nil {
		t.Fatal(err)
	}

	const rel = 1e-8
	check := func(what string, tt int, got, want float64) {
		t.Helper()
		if d := math.Abs(got - want); !(d <= rel*math.Abs(want)) {
			t.Errorf("t=%d %s = %.17g, statsmodels %.17g (rel. diff %.2g)", tt, what, got, want, d/math.Abs(want))
		}
	}
	x, p := make([]float64, 1), make([]float64, 1)
	nu, s := make([]float64, 1), make([]float64, 1)
	var cum float64
	for k := 1; k <= len(y); k++ {
		row := fx.rows[k-1]
		if err := kf.Predict(k); err != nil {
			t.Fatalf("t=%d: Predict: %v", k, err)
		}
		kf.EstimateTo(x, p)
		check("predicted mean", k, x[0], row[0])
		check("predicted variance", k, p[0], row[1])
		if err := kf.Update([]float64{y[k-1]}, k); err != nil {
			t.Fatalf("t=%d: Update: %v", k, err)
		}
		kf.EstimateTo(x, p)
		check("filtered mean", k, x[0], row[2])
		check("filtered variance", k, p[0], row[3])
		if !kf.InnovationTo(nu, s) {
			t.Fatalf("t=%d: no innovation after an update", k)
		}
		check("innovation", k, nu[0], y[k-1]-row[0])
		check("innovation variance", k, s[0], row[4])
		cum += row[5]
		check("cumulative log-likelihood", k, kf.LogLikelihood(), cum)
	}
	check("log-likelihood", len(y), kf.LogLikelihood(), fx.loglik)
}
