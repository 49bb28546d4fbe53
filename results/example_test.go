package results_test

import (
	"math"
	"os"

	"github.com/estbench/estbench/metrics"
	"github.com/estbench/estbench/results"
)

// A shore radar follows a harbour launch; the kf does not apply to the
// nonlinear problem. The numbers are made up for the example.
func ExampleWriteSummary() {
	nan := math.NaN()
	rows := []results.SummaryRow{
		{
			Problem: "launch", Filter: "ukf", Applicable: true,
			Summary: metrics.Summary{
				Runs: 50, RMSE: 12.41, RMSELo: 11.8, RMSEHi: 13.05, PredRMSE: 16.93,
				ANEES: 4.31, ANEESLo: 3.83, ANEESHi: 4.18, ANEESRunMedian: 4.27, NEESInBounds: 0.71,
				ANIS: 2.02, ANISLo: 1.92, ANISHi: 2.08, NsPerStep: 2210, MeanESS: nan,
			},
			EvalsPerStep: 18, // 9 sigma points of a 4-state model, through F and through H
		},
		{Problem: "launch", Filter: "kf", Note: "kf needs a linear model; launch is nonlinear"},
	}
	results.WriteSummary(os.Stdout, "markdown", rows, results.Provenance{})
	// Output:
	// | problem | filter | config | runs | diverged | RMSE [95% CI] | pred RMSE | ANEES [95% bounds] | median run ANEES | NEES in (%) | ANIS [95% bounds] | µs/step | allocs/step | evals/step | notes |
	// | :--- | :--- | :--- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | :--- |
	// | launch | ukf | default | 50 | 0 | 12.4 [11.8, 13.1] | 16.9 | 4.31 [3.83, 4.18] high | 4.27 | 71.0 | 2.02 [1.92, 2.08] in | 2.21 | 0 | 18 |  |
	// | launch | kf | default | - | - | - | - | - | - | - | - | - | - | - | [1] |
	//
	// Notes:
	//
	// 1. kf needs a linear model; launch is nonlinear
	//
	// in/high/low: ANEES or ANIS inside, above or below its two-sided 95% chi-square bounds (high: the filter's covariance is too small, overconfident; low: too large, pessimistic). NEES in: percent of steps whose run-averaged NEES is inside its own 95% bounds (near 95 when consistent). median run ANEES: the median over runs of each run's ANEES, which a few runs whose NEES explodes cannot move (near the state dimension, slightly below it, when consistent).
}
