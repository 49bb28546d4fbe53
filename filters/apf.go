package filters

import (
	"math"
	"math/rand/v2"
)

// APFConfig configures NewAPF. The zero value gives the defaults.
type APFConfig struct {
	// Particles is the number of particles N. If zero, 1000 is used.
	Particles int
	// Resample is the scheme of the first-stage resampling; the zero value
	// is systematic.
	Resample Resampling
}

// APF is the auxiliary particle filter of Pitt & Shephard 1999
// ("Filtering via simulation: auxiliary particle filters", JASA 94(446)),
// in the form with a point prediction μ_i = F(x_i) of each particle (their
// from memory). At an update with measurement z it
//
//  1. gives each particle the first-stage weight λ_i ∝ w_i·p(z | μ_i), the
//     likelihood of z at its predicted mean point;
//  2. resamples the ancestors a_i by λ (every update, by the scheme of
//     APFConfig.Resample);
//  3. propagates them, x_i ~ p(x | x_{a_i}): μ_{a_i} + w_i with additive
//     noise, FW(x_{a_i}, w_i, k) otherwise, w_i ~ N(0, Q);
//  4. weights x_i by p(z | x_i) / p(z | μ_{a_i}).
//
// Particles whose prediction explains z are thus chosen before they are
// moved, which helps when the likelihood is peaked. The likelihood and
// noise are handled as in PF (MeasLogLik when set; HV needs MeasLogLik).
// The second-stage weights are carried to the next step, whose first stage
// includes them; the filter resamples at every update and so has no ESS
// threshold. ESS reports the effective sample size of the second-stage
// weights.
//
// Predict draws the noise w_i of every particle and keeps the bootstrap
// prediction x̃_i = μ_i + w_i (or FW(x_i, w_i)): the estimate after
// Predict, and after an Update without measurement, which keeps the weights
// (as PF does), is that of x̃ under the prior weights, and the innovation
// of an update is taken from H(x̃_i) as in PF. The noise w_i of particle i
// is reused in step 3 for the particle that takes position i, which keeps
// the ancestors' noise independent of their selection. Estimates are the
// weighted moments of the particles after the second stage; errors are as
// for PF.
//
// APF implements Filter, Innovator and ESSer. A step evaluates F once and
// H three times per particle (at x̃, μ and the new particle; H is not
// called for the likelihood when the model has MeasLogLik). All randomness
// comes from the stream passed to Reset.
type APF struct {
	p PF // the particles, weights, estimate and workspace

	mu    []float64 // predicted mean points F(x_i), n*Nx
	noise []float64 // noise of each position: L e_i (additive, n*Nx) or w_i (FW, n*Nw)
	llmu  []float64 // log p(z | μ_i), n
}

var (
	_ Filter    = (*APF)(nil)
	_ Innovator = (*APF)(nil)
	_ ESSer     = (*APF)(nil)
)

// NewAPF returns an auxiliary particle filter for m. Its errors are those
// of NewPF.
func NewAPF(m *Model, cfg APFConfig) (*APF, error) {
	p, err := newPF(m, PFConfig{Particles: cfg.Particles, Resample: cfg.Resample}, "apf")
	if err != nil {
		return nil, err
	}
	p.scalar = false
	nn := m.Nx
	if m.FW != nil {
		nn = m.Nw
	}
	return &APF{
		p:     *p,
		mu:    make([]float64, p.n*m.Nx),
		noise: make([]float64, p.n*nn),
		llmu:  make([]float64, p.n),
	}, nil
}

// Reset draws the particles from N(x0, p0) and sets equal weights.
func (f *APF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.p.Reset(x0, p0, rng) }

// Predict computes the mean points μ_i = F(x_i), draws the noise of every
// particle and forms the bootstrap prediction x̃_i.
func (f *APF) Predict(k int) error {
	p, m := &f.p, f.p.m
	nx := m.Nx
	m.fAll(f.mu, p.x, k)
	if m.FW != nil {
		nw := m.Nw
		for i := 0; i < p.n; i++ {
			w := f.noise[i*nw : i*nw+nw]
			clear(w)
			p.addNoise(w, p.lq, p.qcols)
			m.FW(p.alt[i*nx:i*nx+nx], p.x[i*nx:i*nx+nx], w, k)
		}
	} else {
		clear(f.noise)
		for i := 0; i < p.n; i++ {
			p.addNoise(f.noise[i*nx:i*nx+nx], p.lq, p.qcols)
		}
		for i, v := range f.mu {
			p.alt[i] = v + f.noise[i]
		}
	}
	// x holds x̃; alt keeps the particles of step k-1 (FW needs them).
	p.x, p.alt = p.alt, p.x
	p.haveInnov = false
	p.estOK = false
	return nil
}

// Update runs the two stages on z; z == nil keeps the bootstrap
// prediction and its weights.
func (f *APF) Update(z []float64, k int) error {
	p, m := &f.p, f.p.m
	p.haveInnov = false
	if z == nil {
		p.estimate()
		return p.checkEstimate()
	}
	nx, nz := m.Nx, m.Nz
	if len(z) != nz {
		panic("filters: apf: dimension mismatch")
	}
	if !p.noiseAt(k) {
		return ErrNotPosDef
	}
	// The innovation from the bootstrap prediction under the prior weights.
	p.measure(p.x, k)
	p.innovation(z)

	// First stage: λ_i = w_i p(z | μ_i), into lw.
	f.measureH(f.mu, k)
	mx := math.Inf(-1)
	for i := range p.lw {
		ll := p.pointLogLik(z, f.mu[i*nx:i*nx+nx], p.zh[i*nz:i*nz+nz], k)
		if !(ll >= lwFloor) {
			ll = lwFloor
		}
		f.llmu[i] = ll
		v := ll
		if !p.eq {
			v += p.lw[i]
		}
		v = max(v, lwFloor)
		p.lw[i] = v
		mx = max(mx, v)
	}
	if !(mx > lwFloor) {
		return ErrWeightsZero
	}
	sum, _ := expShift(p.w, p.lw, mx)
	p.rs.parents(p.w, float64(p.n)/sum, p.rng)
	p.resamples++

	// Move the chosen ancestors with the noise of their new position.
	par := p.rs.par[:p.n]
	if m.FW != nil {
		nw := m.Nw
		for i, a := range par {
			m.FW(p.x[i*nx:i*nx+nx], p.alt[int(a)*nx:int(a)*nx+nx], f.noise[i*nw:i*nw+nw], k)
		}
	} else {
		for i, a := range par {
			xi, mi, ni := p.x[i*nx:i*nx+nx], f.mu[int(a)*nx:int(a)*nx+nx], f.noise[i*nx:i*nx+nx]
			for j := range xi {
				xi[j] = mi[j] + ni[j]
			}
		}
	}

	// Second stage: p(z | x_i) / p(z | μ_{a_i}).
	f.measureH(p.x, k)
	mx = math.Inf(-1)
	for i, a := range par {
		v := p.pointLogLik(z, p.x[i*nx:i*nx+nx], p.zh[i*nz:i*nz+nz], k)
		lm := f.llmu[a]
		if !(v >= lwFloor) || lm <= lwFloor {
			v = lwFloor
		} else {
			v -= lm
		}
		p.lw[i] = v
		mx = max(mx, v)
	}
	if !(mx > lwFloor) {
		return ErrWeightsZero
	}
	sum, sum2 := expShift(p.w, p.lw, mx)
	p.eq = false
	p.ess = sum * sum / sum2
	inv := 1 / sum
	for i := range p.w {
		p.w[i] *= inv
	}
	p.estimate()
	if err := p.checkEstimate(); err != nil {
		return err
	}
	shift := mx + math.Log(sum)
	for i := range p.lw {
		p.lw[i] -= shift
	}
	p.haveInnov = true
	return nil
}

// measureH sets p.zh to H(x_i) when the likelihood needs it (the model
// has no MeasLogLik).
func (f *APF) measureH(x []float64, k int) {
	p, m := &f.p, f.p.m
	if m.MeasLogLik != nil {
		return
	}
	m.hAll(p.zh, x, k)
}

// EstimateTo copies the weighted particle mean into x and, if p is not
// nil, the weighted particle covariance into p.
func (f *APF) EstimateTo(x, p []float64) { f.p.EstimateTo(x, p) }

// InnovationTo copies the innovation of the last Update and, if s is not
// nil, its covariance. It reports false after Reset or Predict until an
// Update with a measurement succeeds.
func (f *APF) InnovationTo(nu, s []float64) bool { return f.p.InnovationTo(nu, s) }

// ESS returns the effective sample size of the second-stage weights of
// the last update (N before the first update).
func (f *APF) ESS() float64 { return f.p.ess }
