package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// Resampling is a resampling scheme of the particle filters. The zero
// value is ResampleSystematic. Douc, Cappé & Moulines 2005 ("Comparison of
// resampling schemes for particle filtering", ISPA) compare the four: each
// gives particle i N·w_i offspring on average, and the offspring counts of
// residual and stratified resampling vary less than those of multinomial
// resampling; systematic resampling has no general ordering against them.
type Resampling int

const (
	// ResampleSystematic: one uniform u, positions j + u (Kitagawa 1996,
	// "Monte Carlo filter and smoother for non-Gaussian nonlinear state
	// space models", JCGS 5(1)).
	ResampleSystematic Resampling = iota
	// ResampleStratified: one uniform per position, j + u_j.
	ResampleStratified
	// ResampleMultinomial: N independent draws from the weights.
	ResampleMultinomial
	// ResampleResidual: floor(N w_i) copies of particle i, the remaining
	// R = N − Σ floor(N w_i) drawn multinomially from the residual weights
	// N w_i − floor(N w_i).
	ResampleResidual
)

var resamplingNames = [...]string{"systematic", "stratified", "multinomial", "residual"}

// String returns the scheme's name as ParseResampling reads it.
func (r Resampling) String() string {
	if r >= 0 && int(r) < len(resamplingNames) {
		return resamplingNames[r]
	}
	return "unknown"
}

// ResamplingNames returns the names of the schemes, in the order of their
// values.
func ResamplingNames() []string { return resamplingNames[:] }

// ParseResampling returns the scheme called name ("systematic",
// "stratified", "multinomial" or "residual").
func ParseResampling(name string) (Resampling, error) {
	for i, s := range resamplingNames {
		if s == name {
			return Resampling(i), nil
		}
	}
	return 0, errors.New("filters: unknown resampling scheme " + name)
}

func (r Resampling) valid() bool { return r >= 0 && int(r) < len(resamplingNames) }

// resampler holds the workspace of every scheme for n particles.
type resampler struct {
	scheme Resampling
	idx    []int32   // start counts (systematic), n+1, left all zero
	par    []int32   // parent of each position, n
	pos    []float64 // sorted positions (multinomial, residual), n
}

func newResampler(s Resampling, n int) resampler {
	return resampler{scheme: s, idx: make([]int32, n+1), par: make([]int32, n), pos: make([]float64, n)}
}

// resample writes into dst the n = len(w) particles (d values each) of src
// chosen by the scheme, with weights w summing to n/scale. The systematic
// scheme copies directly (its fast path); the others first choose the
// parents into r.par.
func (r *resampler) resample(dst, src, w []float64, d int, scale float64, rng *rand.Rand) {
	if r.scheme == ResampleSystematic {
		systematicResample(dst, src, w, r.idx, d, scale, 1-rng.Float64())
		return
	}
	r.parents(w, scale, rng)
	gather(dst, src, r.par, d)
}

// parents sets r.par to the parents chosen by the scheme from the weights
// w (summing to n/scale), one uniform or exponential draw at a time from
// rng. For all schemes but residual the parents are in increasing order.
func (r *resampler) parents(w []float64, scale float64, rng *rand.Rand) {
	n := len(w)
	par := r.par[:n]
	switch r.scheme {
	case ResampleSystematic:
		systematicParents(par, w, r.idx, scale, 1-rng.Float64())
	case ResampleStratified:
		// Position j + u_j, u_j in (0, 1], selects the particle i with
		// C_{i-1} < j+u_j <= C_i, C_i = scale·(w_0+...+w_i).
		i, c := 0, w[0]*scale
		for j := range par {
			p := float64(j) + 1 - rng.Float64()
			for c < p && i < n-1 {
				i++
				c += w[i] * scale
			}
			par[j] = int32(i)
		}
	case ResampleMultinomial:
		sortedUniforms(r.pos[:n], float64(n), rng)
		mergeParents(par, r.pos[:n], w, scale)
	case ResampleResidual:
		// floor(scale·w_i) copies of each particle first.
		j := 0
		var rsum float64
		for i, wi := range w {
			nw := wi * scale
			c := int(nw) // nw >= 0
			rsum += nw - float64(c)
			for ; c > 0 && j < n; c-- {
				par[j] = int32(i)
				j++
			}
		}
		rest := n - j
		if rest == 0 {
			return
		}
		// The remaining positions drawn from the residual weights
		// scale·w_i − floor(scale·w_i), summing to rsum.
		pos := r.pos[:rest]
		sortedUniforms(pos, rsum, rng)
		i, c := 0, residual(w[0]*scale)
		for q, p := range pos {
			for c < p && i < n-1 {
				i++
				c += residual(w[i] * scale)
			}
			par[j+q] = int32(i)
		}
	default:
		panic("filters: unknown resampling scheme")
	}
}

func residual(nw float64) float64 { return nw - math.Floor(nw) }

// mergeParents sets par[j] to the particle i with C_{i-1} < pos[j] <= C_i,
// C_i = scale·(w_0+...+w_i), for increasing positions pos.
func mergeParents(par []int32, pos, w []float64, scale float64) {
	n := len(w)
	i, c := 0, w[0]*scale
	for j, p := range pos {
		for c < p && i < n-1 {
			i++
			c += w[i] * scale
		}
		par[j] = int32(i)
	}
}

// sortedUniforms fills pos with len(pos) independent uniforms on
// (0, total), in increasing order, in O(len(pos)) time: the partial sums
// of len(pos)+1 standard exponential draws divided by their total are
// distributed as the order statistics of that many uniforms (Devroye
// 1986, "Non-Uniform Random Variate Generation", Springer, ch. 5,
// uniform spacings; from memory).
func sortedUniforms(pos []float64, total float64, rng *rand.Rand) {
	var s float64
	for j := range pos {
		s += rng.ExpFloat64()
		pos[j] = s
	}
	s += rng.ExpFloat64()
	k := total / s
	for j := range pos {
		pos[j] *= k
	}
}

// systematicParents is systematicResample writing the parents into par
// instead of copying the particles. idx (n+1, all zero) is left all zero.
func systematicParents(par []int32, w []float64, idx []int32, scale, u float64) {
	n := len(w)
	idx = idx[:n+1]
	var c float64
	for i := 1; i < n; i++ {
		c += w[i-1] * scale
		idx[min(int(c-u+1), n)]++
	}
	var p int32
	for j := 0; j < n; j++ {
		p += idx[j]
		idx[j] = 0
		par[j] = p
	}
	idx[n] = 0
}

// gather sets particle j of dst to particle par[j] of src (d values each).
func gather(dst, src []float64, par []int32, d int) {
	if d == 1 {
		dst = dst[:len(par)]
		for j, p := range par {
			dst[j] = src[p]
		}
		return
	}
	for j, p := range par {
		copy(dst[j*d:j*d+d], src[int(p)*d:int(p)*d+d])
	}
}

// roughen adds to each component c of the n = len(x)/d particles x an
// independent N(0, σ_c²) draw with σ_c = k·E_c·n^(−1/d), E_c the range
// max − min of component c over the particles: the roughening of Gordon,
// Salmond & Smith 1993 (IEE Proc. F 140(2); from memory).
// sig (d) is workspace. Angle components are wrapped afterwards.
func roughen(x []float64, d int, k float64, angles []int, sig []float64, rng *rand.Rand) {
	n := len(x) / d
	scale := k * math.Pow(float64(n), -1/float64(d))
	for c := 0; c < d; c++ {
		lo, hi := x[c], x[c]
		for i := c; i < len(x); i += d {
			lo, hi = min(lo, x[i]), max(hi, x[i])
		}
		sig[c] = scale * (hi - lo)
	}
	if d == 1 {
		s := sig[0]
		for i := range x {
			x[i] += s * rng.NormFloat64()
		}
	} else {
		for i := 0; i < len(x); i += d {
			xi := x[i : i+d]
			for c, s := range sig[:d] {
				xi[c] += s * rng.NormFloat64()
			}
		}
	}
	wrapComponents(x, d, angles)
}

// wrapComponents wraps the listed components of the points x (d values
// each) to (-π, π].
func wrapComponents(x []float64, d int, angles []int) {
	for _, c := range angles {
		for i := c; i < len(x); i += d {
			x[i] = wrapAngle(x[i])
		}
	}
}
