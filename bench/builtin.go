package bench

import _ "embed"

// DefaultSuite is the built-in default suite run when no --suite is given.
//
//go:embed suites/default.toml
var DefaultSuite []byte

// Builtin returns the built-in catalogue: the problem list of problems.go
// and the filter list of filters.go. Each call returns a fresh catalogue; a
// program with its own models appends to it.
func Builtin() *Catalogue {
	return &Catalogue{Problems: builtinProblems(), Filters: builtinFilters()}
}
