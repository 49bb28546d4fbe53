package filters

// Internals of pf.go exposed to the external tests.

// SystematicResample exposes systematicResample.
var SystematicResample = systematicResample

// ExpShift exposes expShift, the weight exponential.
var ExpShift = expShift

// ExpShiftDot exposes expShiftDot.
var ExpShiftDot = expShiftDot

// PFResamples returns the number of resampling events since f's last Reset.
func PFResamples(f *PF) int { return f.resamples }
