package metrics

// RunTrace is what the runner records for one filter configuration on one
// Monte Carlo run. Its slices have one entry per step k = 1..Steps and are
// reused from run to run by the runner (an accumulator never keeps them).
type RunTrace struct {
	Run int // run index r

	SqErr []float64 // squared error norm over the scored components; NaN at a step not scored
	NEES  []float64 // normalised estimation error squared (ignored where SqErr is NaN)
	NIS   []float64 // normalised innovation squared; NaN where no measurement

	// PredSqErr is the squared norm of the innovation, ‖z_k − ẑ_{k|k−1}‖²
	// over all measurement components (angles wrapped): the one-step-ahead
	// prediction error, which needs no truth. NaN where there is no
	// measurement or the filter reports no innovation; nil if none is kept.
	PredSqErr []float64

	NsPerStep float64   // wall time of the filter steps divided by the steps
	ESS       []float64 // effective sample size per step (nil for non-particle filters)

	Repairs int // covariance repairs (jitter) the filter needed in this run

	Diverged bool   // the run stopped early
	DivStep  int    // step at which it diverged (1-based), 0 if not
	Reason   string // why: "covariance not positive definite", "NaN estimate", "panic: ..."
}

// Summary is the one-row result of a filter configuration on a problem.
// Values that cannot be computed (no runs left) are NaN.
type Summary struct {
	Runs     int // Monte Carlo runs attempted
	Diverged int // runs that diverged and are excluded from the metrics below

	RMSE, RMSELo, RMSEHi float64 // RMSE and its 95% bootstrap interval over runs

	// PredRMSE is the root of the mean of PredSqErr over runs and the
	// steps with a measurement: the one-step-ahead prediction error.
	PredRMSE float64

	ANEES, ANEESLo, ANEESHi float64 // average NEES and its two-sided 95% chi-square bounds
	// ANEESRunMedian is the median over the runs that score a step of
	// each run's ANEES (its NEES averaged over its scored steps): unlike
	// ANEES it is not dominated by a few runs whose NEES explodes.
	ANEESRunMedian float64
	NEESInBounds   float64 // fraction of steps whose run-averaged NEES is inside its own 95% bounds

	ANIS, ANISLo, ANISHi float64 // the same for NIS
	NISInBounds          float64

	NsPerStep float64 // median over runs of filter time per step
	MeanESS   float64 // mean effective sample size (NaN for non-particle filters)
	Repairs   int     // covariance repairs over all runs, diverged ones included

	Warnings []string // degraded but usable results, each saying what to do
}

// CurvePoint is one step of a per-step curve over runs.
type CurvePoint struct {
	Step int
	RMSE float64 // sqrt of the mean over runs of the squared error norm at this step
	// PredRMSE is the root of the mean over runs of PredSqErr at this
	// step; NaN where no run had a measurement.
	PredRMSE float64
	ANEES    float64 // NEES averaged over runs at this step
	ANEESLo  float64 // its 95% bounds for the runs that contributed
	ANEESHi  float64
	ANIS     float64 // NaN where no run had a measurement
	Runs     int     // runs that contributed (non-diverged)

	ANISLo, ANISHi float64 // 95% bounds of ANIS for the NISRuns measurements; NaN if none
	NISRuns        int     // non-diverged runs that had a measurement at this step
}

// RunStat is the scalar summary of one Monte Carlo run (see RunStatOf).
// The metrics of a diverged run are NaN.
type RunStat struct {
	Run      int
	Diverged bool
	DivStep  int
	Reason   string

	RMSE      float64 // sqrt of the mean over steps of SqErr
	PredRMSE  float64 // sqrt of the mean of PredSqErr over the steps with a value; NaN if none
	ANEES     float64 // mean over steps of NEES
	ANIS      float64 // mean of NIS over the steps with a measurement; NaN if none
	NsPerStep float64 // as recorded in the trace, also for a diverged run
	MeanESS   float64 // mean over steps of ESS; NaN without ESS
	Repairs   int     // covariance repairs in the run
}
