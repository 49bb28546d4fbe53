// Package metrics turns the per-run traces the runner records into the
// scores of estbench: RMSE with a bootstrap interval, NEES and NIS with
// chi-square consistency bounds, divergence counts, runtime and effective
// sample size. It also holds the statistics they rest on (chi-square
// bounds, a reusable percentile bootstrap, quantiles, running moments) and
// the normalised squared error eᵀC⁻¹e behind NEES and NIS (Normalised).
//
// # Streaming and memory
//
// An Accumulator takes one RunTrace per run (Add) and keeps none of its
// slices: per step it holds the sums over runs of the squared error, NEES
// and NIS and the count of runs with a measurement (O(steps)); per usable
// run it holds three float64 (the run's mean squared error, for the
// bootstrap, its ns per step and its ANEES, for their medians). Memory is therefore
// O(steps + runs), never O(steps × runs). Grow pre-sizes the per-run part so
// that Add allocates nothing. Summary and Curves read the sums without
// changing them.
//
// # Determinism
//
// Runs are added in increasing run order (Add panics otherwise), which fixes
// the order of every floating-point sum; there is no map iteration and no
// parallelism, and the bootstrap draws from math/rand/v2's PCG seeded by the
// caller. The same runs and seed give a bit-identical Summary however the
// runs were computed.
//
// # Definitions
//
// Let M be the number of non-diverged runs, K the number of steps, e_r(k)²
// the squared error norm (SqErr), ε_r(k) the NEES and ν_r(k) the NIS of run
// r at step k, and nx, nz the state and measurement dimensions.
//
//	RMSE  = sqrt( Σ_r Σ_k e_r(k)² / (M·K) )
//	ANEES = Σ_r Σ_k ε_r(k) / (M·K)       (the mean over k of ε̄(k) = Σ_r ε_r(k)/M)
//	ANIS  = Σ_(r,k)∈S ν_r(k) / |S|       (S: the (run, step) pairs with a measurement)
//
// For a consistent estimator with Gaussian errors each ε_r(k) is χ²_nx and
// each ν_r(k) is χ²_nz, so M·ε̄(k) is χ²_(M·nx), and M·K·ANEES is
// χ²_(M·K·nx) when the steps are treated as independent (Bar-Shalom, Li &
// Kirubarajan 2001, "Estimation with Applications to Tracking and
// Navigation", §5.4.2). The acceptance interval of an average of m such
// values of n degrees of freedom each, at level 0.95, is
//
//	ChiSquareBounds(m·n, m, 0.95) = [χ²_(m·n)(0.025), χ²_(m·n)(0.975)] / m
//
// with quantiles from gonum's distuv.ChiSquared. ANEESLo/Hi use m = M·K,
// ANISLo/Hi use m = |S|. NEESInBounds is the fraction of the K steps whose
// ε̄(k) lies in ChiSquareBounds(M·nx, M, 0.95); NISInBounds is the fraction
// of the steps with at least one measurement whose average NIS over their
// c(k) measurements lies in ChiSquareBounds(c(k)·nz, c(k), 0.95)
// (Bar-Shalom et al. 2001, §5.4). A consistent estimator has both near 0.95.
// ANEES is not divided by nx: a consistent estimator has ANEES near nx.
//
// ANEESRunMedian is the median over the non-diverged runs of each run's
// own ANEES,
//
//	ANEES_r = Σ_k ε_r(k) / K_r           (K_r: the steps run r scores)
//	ANEESRunMedian = Median_r ANEES_r    (over the runs with K_r > 0)
//
// ANEES weighs every (run, step) pair alike, so a few runs whose NEES
// explodes (a particle cloud collapsed far from the truth) can make it
// arbitrarily large; the median reads what a typical run does. For a
// consistent estimator, with the steps treated as independent as above
// and K scored steps per run, K·ANEES_r is χ²_(K·nx) (Bar-Shalom et al.
// 2001, §5.4.2), whose median lies slightly below its mean K·nx, so
// ANEESRunMedian is near nx too but slightly below it: it estimates
//
//	χ²_(K·nx)(0.5) / K ≈ nx·(1 − 2/(9·K·nx))³ ≈ nx − 2/(3K)
//
// (the median of χ²_ν by the Wilson–Hilferty approximation, Wilson &
// Hilferty 1931, "The distribution of chi-square", PNAS 17(12), 684–688;
// close for ν ≥ 10, 9.3480 for the exact 9.3418 at ν = 10, and 1.3% high
// at ν = 2, 1.4047, where χ²_2 is exponential with the exact median
// 2·ln 2 = 1.3863). With 100 steps that is 0.9933 for nx = 1 and 4.9933 for nx = 5: for long
// runs the median reads on the same scale as ANEES and nx. It has no
// bounds or mark of its own; read it against nx. A median near nx under an
// ANEES far above its bounds says the ANEES comes from a few runs; a
// median far above nx says the filter is overconfident in most runs.
//
// The one-step-ahead prediction error needs no truth. With ν_r(k) here
// the innovation z_r(k) − ẑ_r(k|k−1) (PredSqErr holds ‖ν_r(k)‖², angle
// components wrapped) and P the (run, step) pairs with an innovation,
//
//	PredRMSE = sqrt( Σ_(r,k)∈P ‖ν_r(k)‖² / |P| )
//
// For a consistent filter E‖ν‖² = tr S, S the innovation covariance
// (Bar-Shalom et al. 2001, §5.4), so PredRMSE is near sqrt(mean tr S); it
// mixes units when the measurement does (range and bearing).
//
// With NoTruth (recorded data: no truth, the same data in every run) RMSE,
// ANEES, their intervals and bounds, ANEESRunMedian and NEESInBounds are NaN, Summary
// warns NoTruthWarning, and ANISLo/Hi use m = the number of steps with a
// measurement (one run's values; the runs are not independent samples of
// the data), the per-step NIS bounds m = 1.
//
// A step whose SqErr is NaN is not scored (recorded data that mark the
// samples to evaluate, or that lack truth there): it is left out of RMSE,
// ANEES, the run averages and the curves, and M·K above becomes the number
// N of scored (run, step) pairs, K the number of steps scored in some run.
// With Replayed (recorded data against a fixed truth, the same in every
// run; the runs differ only in what their streams draw, such as the prior
// error) the ANEES and ANIS bounds use one run's values, m = K for ANEES,
// and the per-step bounds m = 1, as for NoTruth.
//
// RMSELo/Hi is the 95% percentile bootstrap interval over runs (Efron &
// Tibshirani 1993, "An Introduction to the Bootstrap", §13.3): runs are
// resampled with replacement, each resample scored as the square root of
// the mean of its runs' mean squared errors, Resamples (default 2000)
// times; the ends are the 0.025 and 0.975 quantiles of those scores.
// Quantiles, the median included, interpolate linearly between order
// statistics (Hyndman & Fan 1996, "Sample quantiles in statistical
// packages", definition 7, the default of R and NumPy).
//
// NsPerStep is the median over the non-diverged runs of each run's ns per
// step: a diverged run stopped early and its timing covers a different
// amount of work. MeanESS is the mean over the non-diverged runs that report
// ESS and all their steps. Moments gives a running mean and variance by
// Welford's update (Welford 1962, Technometrics 4(3)).
//
// # Divergence, NaN and warnings
//
// A diverged run is counted in Summary.Diverged and its values are ignored
// entirely: its slices may hold NaN, partial or stale values. Every metric
// that has nothing to be computed from is NaN: all metrics when no run is
// usable; RMSELo/Hi with fewer than 2 usable runs; the NIS metrics when nz
// is 0 or no step had a measurement; MeanESS when no run reported ESS. A NIS
// value of NaN means "no measurement at this step". A NaN in SqErr or NEES
// of a run not marked diverged propagates into the metrics: the runner marks
// such runs diverged.
//
// Summary.Warnings says what degraded a result and what to do:
//
//   - "N of M runs diverged (first: run r, step k: reason)", with the first
//     line of the first diverged run's reason;
//   - "bounds from N runs are loose: use --runs 20 or more" with fewer than
//     10 usable runs (a common rule of thumb, no source);
//   - "the RMSE interval needs at least 2 runs" with one usable run;
//   - "no runs were added" when Add was never called.
//
// # Errors
//
// Caller mistakes (a trace of the wrong length, runs out of order,
// impossible arguments) panic with a "metrics:" message. Library code here
// never prints.
//
// This package imports only gonum and the standard library.
package metrics
