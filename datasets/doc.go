// Package datasets owns the benchmark problems of estbench (synthetic models
// from the literature) and, later, loaders of public datasets. Both produce
// the one normalised form, Sequence.
//
// # Problems
//
// A Problem is a filters.Model plus its prior, number of steps, scored
// components, traits and a simulator. Each problem's constructor documents
// its published source, its parameters and their defaults; a config struct's
// zero value gives the published defaults.
//
// # Randomness
//
// Simulate draws only from the *rand.Rand it is given, so the truth and
// measurements of a run depend only on the stream the runner derives from
// (suite seed, problem, run).
//
// # Memory
//
// Simulate fills a Sequence whose buffers are reused from run to run; it
// allocates only when a buffer is too small.
package datasets
