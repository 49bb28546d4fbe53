package bench

// Catalogue is the set of problems and filters a suite may name. The one
// explicit list of built-in entries is Builtin; a program that adds its own
// models appends to a copy of it.
type Catalogue struct {
	Problems []ProblemSpec
	Filters  []FilterSpec
}

// Problem returns the problem spec called name.
func (c *Catalogue) Problem(name string) (*ProblemSpec, bool) {
	for i := range c.Problems {
		if c.Problems[i].Name == name {
			return &c.Problems[i], true
		}
	}
	return nil, false
}

// Filter returns the filter spec called name.
func (c *Catalogue) Filter(name string) (*FilterSpec, bool) {
	for i := range c.Filters {
		if c.Filters[i].Name == name {
			return &c.Filters[i], true
		}
	}
	return nil, false
}
