package metrics

import (
	"bufio"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Against NumPy 1.24.2 numpy.percentile, method "linear" (Hyndman & Fan
// 1996, "Sample quantiles in statistical packages", definition 7), from
// Debian python3-numpy 1:1.24.2-1+deb12u1: testdata/quantiles.csv written by
// testdata/gen_quantile.py.
func TestQuantileNumPy(t *testing.T) {
	f, err := os.Open("testdata/quantiles.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	n := 0
	for line := 1; sc.Scan(); line++ {
		text := sc.Text()
		if strings.HasPrefix(text, "#") {
			continue
		}
		fs := strings.SplitN(text, ",", 3)
		p, err1 := strconv.ParseFloat(fs[0], 64)
		want, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("quantiles.csv:%d: bad number", line)
		}
		var x []float64
		for _, s := range strings.Fields(fs[2]) {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("quantiles.csv:%d: %v", line, err)
			}
			x = append(x, v)
		}
		orig := slices.Clone(x)
		got := Quantile(x, p)
		if !scalar.EqualWithinAbsOrRel(got, want, 1e-15, 1e-14) {
			t.Errorf("quantiles.csv:%d: Quantile(p=%g) = %.17g, numpy %.17g", line, p, got, want)
		}
		if !slices.Equal(x, orig) {
			t.Fatalf("quantiles.csv:%d: Quantile modified its input", line)
		}
		if p == 0.5 {
			if m := Median(x); m != got {
				t.Errorf("quantiles.csv:%d: Median %v != Quantile(0.5) %v", line, m, got)
			}
		}
		n++
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if n < 50 {
		t.Fatalf("read only %d fixture rows", n)
	}
}

// The median by its definition: the middle value, or the mean of the two
// middle values.
func TestMedianDefinition(t *testing.T) {
	cases := []struct {
		name string
		v    []float64
		want float64
	}{
		{"odd", []float64{9, 1, 5}, 5},
		{"even", []float64{4, 1, 3, 2}, 2.5},
		{"one", []float64{-7}, -7},
		{"empty", nil, math.NaN()},
		{"nan", []float64{1, math.NaN(), 3}, math.NaN()},
	}
	for _, c := range cases {
		orig := slices.Clone(c.v)
		got := Median(c.v)
		if !(got == c.want || math.IsNaN(got) && math.IsNaN(c.want)) {
			t.Errorf("%s: Median = %v, want %v", c.name, got, c.want)
		}
		if !slices.EqualFunc(c.v, orig, func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }) {
			t.Errorf("%s: Median modified its input", c.name)
		}
	}
}

// NIST Statistical Reference Datasets (StRD), univariate summary statistics,
// "lower difficulty" NumAcc1 and "higher difficulty" NumAcc4. Data and
// certified values quoted from memory: NumAcc1 is 10000001, 10000003,
// 10000002 (mean 10000002, standard deviation 1); NumAcc4 is 10000000.2
// followed by 500 pairs 10000000.1, 10000000.3 (mean 10000000.2, standard
// deviation 0.1). Both certified values also follow by hand: NumAcc4 has
// 1000 deviations of ±0.1 over 1000 degrees of freedom.
func TestMomentsNISTStRD(t *testing.T) {
	var a Moments
	for _, x := range []float64{10000001, 10000003, 10000002} {
		a.Add(x)
	}
	if a.N() != 3 || a.Mean() != 10000002 || a.Var() != 1 {
		t.Errorf("NumAcc1: n %d mean %v var %v, want 3, 10000002, 1", a.N(), a.Mean(), a.Var())
	}

	var b Moments
	b.Add(10000000.2)
	for range 500 {
		b.Add(10000000.1)
		b.Add(10000000.3)
	}
	// The data are stored to float64 spacing at 1e7 (1.9e-9), so the
	// certified values hold to about 1e-9 in the mean and 1e-8 in the
	// standard deviation; the naive sum-of-squares formula loses all digits
	// here.
	if b.N() != 1001 || math.Abs(b.Mean()-10000000.2) > 2e-9 || math.Abs(math.Sqrt(b.Var())-0.1) > 1e-8 {
		t.Errorf("NumAcc4: n %d mean %.12f sd %.12f, want 1001, 10000000.2, 0.1", b.N(), b.Mean(), math.Sqrt(b.Var()))
	}

	var z Moments
	if !math.IsNaN(z.Mean()) || !math.IsNaN(z.Var()) {
		t.Error("empty Moments: want NaN mean and variance")
	}
	z.Add(4)
	if z.Mean() != 4 || !math.IsNaN(z.Var()) {
		t.Errorf("one value: mean %v var %v, want 4, NaN", z.Mean(), z.Var())
	}
}

// For the mean of n normal draws the percentile bootstrap interval agrees
// with the normal-theory interval x̄ ± z·s/√n (Efron & Tibshirani 1993, "An
// Introduction to the Bootstrap", §13.3).
//
// Tolerance, in units of se = s/√n: the Monte Carlo error of an estimated
// 2.5% quantile from B resamples has standard deviation about
// sqrt(α(1−α)/B)/φ(z_α) = sqrt(0.025·0.975/20000)/0.0584 ≈ 0.019 (asymptotic
// variance of a sample quantile, e.g. Serfling 1980, "Approximation
// Theorems of Mathematical Statistics", §2.3.3, from memory); the plug-in variance (divisor n) narrows
// each end by 1−sqrt(199/200) ≈ 0.0025·1.96 ≈ 0.005; skewness of the sample
// moves the ends by O(n^-1/2 · 1/6) ≈ 0.01. 0.1·se covers these at five
// Monte Carlo standard deviations, and a 90% interval (ends 0.32·se inward)
// or a resample of the wrong size would fail.
func TestBootstrapMatchesNormalTheory(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	const n = 200
	x := make([]float64, n)
	var m Moments
	for i := range x {
		x[i] = 5 + 2*rng.NormFloat64()
		m.Add(x[i])
	}
	se := math.Sqrt(m.Var() / n)
	const z = 1.959963984540054 // standard normal 0.975 quantile
	mean := func(idx []int) float64 {
		var s float64
		for _, i := range idx {
			s += x[i]
		}
		return s / float64(len(idx))
	}
	lo, hi := Bootstrap(n, 20000, 3, 0.95, mean)
	t.Logf("ends off by %.4f and %.4f se", (lo-(m.Mean()-z*se))/se, (hi-(m.Mean()+z*se))/se)
	if math.Abs(lo-(m.Mean()-z*se)) > 0.1*se || math.Abs(hi-(m.Mean()+z*se)) > 0.1*se {
		t.Errorf("bootstrap [%.5f, %.5f], normal theory [%.5f, %.5f] (se %.5f)", lo, hi, m.Mean()-z*se, m.Mean()+z*se, se)
	}
}

func TestBootstrapDeterministic(t *testing.T) {
	x := []float64{3, 1, 4, 1, 5, 9, 2, 6, 5, 3}
	mean := func(idx []int) float64 {
		var s float64
		for _, i := range idx {
			s += x[i]
		}
		return s / float64(len(idx))
	}
	lo1, hi1 := Bootstrap(len(x), 0, 42, 0.95, mean)
	lo2, hi2 := Bootstrap(len(x), DefaultResamples, 42, 0.95, mean)
	if math.Float64bits(lo1) != math.Float64bits(lo2) || math.Float64bits(hi1) != math.Float64bits(hi2) {
		t.Errorf("same seed gave [%v, %v] and [%v, %v]", lo1, hi1, lo2, hi2)
	}
	lo3, hi3 := Bootstrap(len(x), 0, 43, 0.95, mean)
	if lo3 == lo1 && hi3 == hi1 {
		t.Errorf("seeds 42 and 43 gave the same interval [%v, %v]", lo1, hi1)
	}
	// Every resample mean lies between the smallest and largest value.
	if !(lo1 >= 1 && lo1 < hi1 && hi1 <= 9) {
		t.Errorf("interval [%v, %v] outside the data range [1, 9]", lo1, hi1)
	}
	if lo, hi := Bootstrap(1, 0, 42, 0.95, mean); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("n = 1: got [%v, %v], want NaN", lo, hi)
	}
	if lo, hi := Bootstrap(len(x), 0, 42, 0.95, func([]int) float64 { return math.NaN() }); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("NaN statistic: got [%v, %v], want NaN", lo, hi)
	}
}
