package metrics

import (
	"math"
	"math/rand/v2"
	"slices"
)

// DefaultResamples is the number of bootstrap resamples used when a caller
// passes zero.
const DefaultResamples = 2000

// bootstrapStream is the second PCG seed word of every bootstrap stream, so
// that a bootstrap seed never yields the same stream as a run seed that
// happens to share its first word.
const bootstrapStream = 0x6d657472696373 // "metrics"

// Median returns the median of v (the mean of the two middle values when
// len(v) is even). It does not modify v; it sorts a copy. The median of an
// empty slice, or of one holding a NaN, is NaN.
func Median(v []float64) float64 { return Quantile(v, 0.5) }

// Quantile returns the p-quantile of v by linear interpolation between order
// statistics: with v sorted into x[0] ≤ … ≤ x[n−1], h = (n−1)·p, the value is
// x[⌊h⌋] + (h−⌊h⌋)·(x[⌊h⌋+1] − x[⌊h⌋]) (Hyndman & Fan 1996, "Sample quantiles
// in statistical packages", definition 7). It does not modify v. It returns
// NaN for an empty v or one holding a NaN, and panics unless 0 ≤ p ≤ 1.
func Quantile(v []float64, p float64) float64 {
	if !(p >= 0 && p <= 1) {
		panic("metrics: Quantile needs 0 <= p <= 1")
	}
	if len(v) == 0 {
		return math.NaN()
	}
	s := make([]float64, len(v))
	copy(s, v)
	return quantileSortInPlace(s, p)
}

// quantileSortInPlace sorts s and returns its p-quantile (definition 7), or
// NaN if s holds a NaN.
func quantileSortInPlace(s []float64, p float64) float64 {
	for _, x := range s {
		if math.IsNaN(x) {
			return math.NaN()
		}
	}
	slices.Sort(s)
	return quantileSorted(s, p)
}

// quantileSorted is definition 7 on an already sorted, NaN-free, non-empty s.
func quantileSorted(s []float64, p float64) float64 {
	h := float64(len(s)-1) * p
	i := int(math.Floor(h))
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	f := h - float64(i)
	if f == 0 {
		return s[i]
	}
	return s[i] + f*(s[i+1]-s[i])
}

// Bootstrap returns the percentile bootstrap interval at the given level
// (e.g. 0.95) of a statistic of n observations (Efron & Tibshirani 1993, "An
// Introduction to the Bootstrap", §13.3). It draws B resamples of n indices
// in [0, n) with replacement, calls stat on each, and returns the
// (1−level)/2 and (1+level)/2 quantiles (see Quantile) of the B values. If B
// is zero, DefaultResamples is used.
//
// The index slice passed to stat is reused between calls; stat must not keep
// it. A paired statistic (the relative change between two configurations
// scored on the same runs, say) indexes both samples with the same idx.
//
// Resampling draws from math/rand/v2's PCG seeded with (seed, a fixed
// constant), in order, so the same arguments give the same interval. With
// n < 2 there is nothing to resample and both ends are NaN; if stat returns
// NaN for any resample, both ends are NaN. It panics on n < 0, B < 0, a
// level outside (0, 1) or a nil stat.
func Bootstrap(n, B int, seed uint64, level float64, stat func(idx []int) float64) (lo, hi float64) {
	if n < 0 || B < 0 || !(level > 0 && level < 1) || stat == nil {
		panic("metrics: Bootstrap needs n >= 0, B >= 0, 0 < level < 1 and a stat")
	}
	if n < 2 {
		return math.NaN(), math.NaN()
	}
	if B == 0 {
		B = DefaultResamples
	}
	rng := rand.New(rand.NewPCG(seed, bootstrapStream))
	idx := make([]int, n)
	vals := make([]float64, B)
	for b := range vals {
		for i := range idx {
			idx[i] = rng.IntN(n)
		}
		v := stat(idx)
		if math.IsNaN(v) {
			return math.NaN(), math.NaN()
		}
		vals[b] = v
	}
	slices.Sort(vals)
	return quantileSorted(vals, (1-level)/2), quantileSorted(vals, (1+level)/2)
}

// Moments is a running mean and variance by Welford's update (Welford 1962,
// "Note on a method for calculating corrected sums of squares and
// products", Technometrics 4(3)), which avoids the cancellation of the
// sum-of-squares formula. The zero value is empty and ready to use.
type Moments struct {
	n    int
	mean float64 // running mean of the values added
	m2   float64 // running sum of squared deviations from the mean
}

// Add adds one value in O(1) without allocating.
func (m *Moments) Add(x float64) {
	m.n++
	d := x - m.mean
	m.mean += d / float64(m.n)
	m.m2 += d * (x - m.mean)
}

// N returns the number of values added.
func (m *Moments) N() int { return m.n }

// Mean returns the mean of the values added, NaN if none.
func (m *Moments) Mean() float64 {
	if m.n == 0 {
		return math.NaN()
	}
	return m.mean
}

// Var returns the sample variance (divisor n−1) of the values added, NaN
// with fewer than two.
func (m *Moments) Var() float64 {
	if m.n < 2 {
		return math.NaN()
	}
	return m.m2 / float64(m.n-1)
}
