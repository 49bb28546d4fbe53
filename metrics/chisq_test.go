package metrics

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat/distuv"
)

// NIST/SEMATECH e-Handbook of Statistical Methods (2012), §1.3.6.7.4
// "Critical values of the chi-square distribution", upper- and lower-tail
// tables. The values below are quoted from memory of that table; each was
// cross-checked against SciPy 1.10.1 (testdata/chi2_quantiles.csv) and
// agrees to the table's printed three decimals.
func TestChiSquareQuantileNISTTable(t *testing.T) {
	cases := []struct {
		dof, p, want float64
	}{
		{1, 0.025, 0.001}, {1, 0.95, 3.841}, {1, 0.975, 5.024}, {1, 0.99, 6.635},
		{2, 0.025, 0.051}, {2, 0.95, 5.991}, {2, 0.975, 7.378},
		{3, 0.025, 0.216}, {3, 0.975, 9.348},
		{5, 0.025, 0.831}, {5, 0.05, 1.145}, {5, 0.95, 11.070}, {5, 0.975, 12.833},
		{6, 0.025, 1.237}, {6, 0.975, 14.449},
		{10, 0.025, 3.247}, {10, 0.05, 3.940}, {10, 0.95, 18.307}, {10, 0.975, 20.483},
		{20, 0.025, 9.591}, {20, 0.05, 10.851}, {20, 0.95, 31.410}, {20, 0.975, 34.170},
		{50, 0.025, 32.357}, {50, 0.05, 34.764}, {50, 0.95, 67.505}, {50, 0.975, 71.420},
		{100, 0.025, 74.222}, {100, 0.05, 77.929}, {100, 0.95, 124.342}, {100, 0.975, 129.561},
	}
	for _, c := range cases {
		got := distuv.ChiSquared{K: c.dof}.Quantile(c.p)
		// Half a unit in the table's last printed place.
		if math.Abs(got-c.want) > 0.0005+1e-12 {
			t.Errorf("chi-square dof %g p %g: got %.6f, table %.3f", c.dof, c.p, got, c.want)
		}
	}
}

// Against SciPy 1.10.1 scipy.stats.chi2.ppf (Debian python3-scipy 1.10.1-2),
// testdata/chi2_quantiles.csv written by testdata/gen_chi2.py, including the
// large degrees of freedom (M·K·nx) used by the ANEES bounds.
func TestChiSquareQuantileSciPy(t *testing.T) {
	f, err := os.Open("testdata/chi2_quantiles.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	n := 0
	for line := 1; sc.Scan(); line++ {
		text := sc.Text()
		if strings.HasPrefix(text, "#") || strings.HasPrefix(text, "dof") {
			continue
		}
		fs := strings.Split(text, ",")
		if len(fs) != 3 {
			t.Fatalf("chi2_quantiles.csv:%d: want 3 fields", line)
		}
		var v [3]float64
		for i, s := range fs {
			if v[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("chi2_quantiles.csv:%d: %v", line, err)
			}
		}
		got := distuv.ChiSquared{K: v[0]}.Quantile(v[1])
		if !scalar.EqualWithinAbsOrRel(got, v[2], 1e-300, 1e-9) {
			t.Errorf("chi2_quantiles.csv:%d: dof %g p %g: got %.17g, scipy %.17g", line, v[0], v[1], got, v[2])
		}
		n++
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if n < 100 {
		t.Fatalf("read only %d fixture rows", n)
	}
}

// Bar-Shalom, Li & Kirubarajan 2001, "Estimation with Applications to
// Tracking and Navigation", §5.4.2: for N = 50 runs of a 2-dimensional state
// the two-sided 95% region of the ANEES is about [1.5, 2.6] (worked example,
// quoted from memory). It is [χ²_100(0.025), χ²_100(0.975)]/50, and the
// NIST table (§1.3.6.7.4) gives 74.222/50 = 1.48444 and 129.561/50 = 2.59122.
func TestChiSquareBoundsBarShalomExample(t *testing.T) {
	lo, hi := ChiSquareBounds(100, 50, 0.95)
	if math.Round(lo*10)/10 != 1.5 || math.Round(hi*10)/10 != 2.6 {
		t.Errorf("ChiSquareBounds(100, 50, 0.95) = [%v, %v], book prints [1.5, 2.6]", lo, hi)
	}
	// Half a unit of the table's last place, divided by the scale 50.
	if math.Abs(lo-74.222/50) > 0.0005/50+1e-12 || math.Abs(hi-129.561/50) > 0.0005/50+1e-12 {
		t.Errorf("ChiSquareBounds(100, 50, 0.95) = [%.6f, %.6f], want [1.48444, 2.59122]", lo, hi)
	}
	// A 90% level uses the 0.05 and 0.95 columns: 77.929 and 124.342 (NIST).
	lo, hi = ChiSquareBounds(100, 1, 0.90)
	if math.Abs(lo-77.929) > 0.0005+1e-12 || math.Abs(hi-124.342) > 0.0005+1e-12 {
		t.Errorf("ChiSquareBounds(100, 1, 0.90) = [%.4f, %.4f], want [77.929, 124.342]", lo, hi)
	}
}

func TestChiSquareBoundsPanics(t *testing.T) {
	for _, c := range []struct{ dof, scale, level float64 }{
		{0, 1, 0.95}, {-1, 1, 0.95}, {1, 0, 0.95}, {1, 1, 0}, {1, 1, 1}, {math.NaN(), 1, 0.95}, {math.Inf(1), 1, 0.95},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("ChiSquareBounds(%v, %v, %v) did not panic", c.dof, c.scale, c.level)
				}
			}()
			ChiSquareBounds(c.dof, c.scale, c.level)
		}()
	}
}
