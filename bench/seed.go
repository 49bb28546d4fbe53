package bench

import "math/rand/v2"

// Streams. Every random stream of a suite is derived from the suite seed,
// the identity of the problem (its name and full parameter values, so that
// reordering a suite changes nothing) and the run index. The truth and
// measurements of run r use the "data" stream; each filter configuration
// draws from its own stream derived from the same triple and its identity,
// so adding a filter to a suite does not change what the others see.

// splitmix64 is the finaliser of Steele, Lea & Flood 2014 ("Fast splittable
// pseudorandom number generators", OOPSLA), used to mix seed material.
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// hashString is 64-bit FNV-1a.
func hashString(s string) uint64 {
	h := uint64(14695981039346656037)
	for i := 0; i < len(s); i++ {
		h ^= uint64(s[i])
		h *= 1099511628211
	}
	return h
}

// streamSeed derives the two PCG words of one stream.
func streamSeed(seed uint64, problem string, run int, purpose string) (uint64, uint64) {
	a := splitmix64(seed ^ splitmix64(hashString(problem)))
	a = splitmix64(a ^ uint64(run))
	b := splitmix64(a ^ hashString(purpose))
	return a, splitmix64(b)
}

// stream reseeds pcg for (seed, problem, run, purpose) and returns it.
func stream(pcg *rand.PCG, seed uint64, problem string, run int, purpose string) {
	pcg.Seed(streamSeed(seed, problem, run, purpose))
}
