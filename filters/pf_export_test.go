package filters

import "math/rand/v2"

// Internals of pf.go exposed to the external tests.

// SystematicResample exposes systematicResample.
var SystematicResample = systematicResample

// ExpShift exposes expShift, the weight exponential.
var ExpShift = expShift

// ExpShiftDot exposes expShiftDot.
var ExpShiftDot = expShiftDot

// PFResamples returns the number of resampling events since f's last Reset.
func PFResamples(f *PF) int { return f.resamples }

// Resample runs one resampling of scheme s: dst gets the len(w) particles
// (d values each) of src chosen with the weights w, which sum to
// len(w)/scale.
func Resample(s Resampling, dst, src, w []float64, d int, scale float64, rng *rand.Rand) {
	r := newResampler(s, len(w))
	r.resample(dst, src, w, d, scale, rng)
}

// NewResampleFunc returns Resample for scheme s and n particles with its
// workspace allocated once.
func NewResampleFunc(s Resampling, n int) func(dst, src, w []float64, d int, scale float64, rng *rand.Rand) {
	r := newResampler(s, n)
	return r.resample
}

// PFParticles returns f's particles (n*Nx, particle i at [i*Nx:]); the
// slice is f's own and changes with it.
func PFParticles(f *PF) []float64 { return f.x }
