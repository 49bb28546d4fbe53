package bench

import (
	"fmt"
	"sort"
	"strconv"
	"strings"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// Kind is the type of a parameter value.
type Kind int

const (
	Int    Kind = iota // an integer, written as a TOML integer
	Float              // a real number, TOML integer or float
	String             // one of Choices, or free text if Choices is empty
)

func (k Kind) String() string {
	switch k {
	case Int:
		return "integer"
	case Float:
		return "number"
	}
	return "string"
}

// Param describes one parameter of a problem or filter.
type Param struct {
	Name    string
	Kind    Kind
	Default Value
	Doc     string
	Choices []string // for String parameters; empty means any text
	Min     float64  // for numbers: smallest allowed value (inclusive)
	Max     float64  // largest allowed value (inclusive); Min == Max == 0 means unbounded
}

// Value is one parameter value: a number (Int or Float) or a string.
type Value struct {
	Num float64
	Str string
}

// Format writes v as it appears in a config column.
func (v Value) Format(k Kind) string {
	switch k {
	case Int:
		return strconv.FormatInt(int64(v.Num), 10)
	case Float:
		return strconv.FormatFloat(v.Num, 'g', -1, 64)
	}
	return v.Str
}

// Values holds the parameter values of one configuration, by name.
type Values map[string]Value

// Int returns the integer parameter name.
func (v Values) Int(name string) int { return int(v[name].Num) }

// Float returns the numeric parameter name.
func (v Values) Float(name string) float64 { return v[name].Num }

// Str returns the string parameter name.
func (v Values) Str(name string) string { return v[name].Str }

// ProblemSpec is one entry of the problem catalogue.
type ProblemSpec struct {
	Name    string
	Summary string
	Source  string // published source
	Params  []Param
	// Build makes a problem from a full set of parameter values.
	Build func(v Values) (*datasets.Problem, error)
}

// FilterSpec is one entry of the filter catalogue.
type FilterSpec struct {
	Name    string
	Summary string
	Source  string
	Traits  string // what the filter needs, in words, for the listing
	Params  []Param
	// Applies reports whether the filter can run on a problem with these
	// traits, and if not, why (a sentence naming the problem's missing trait).
	Applies func(t datasets.Traits) (ok bool, reason string)
	// Manifold says the filter runs on a state on a manifold
	// (filters.Model.Manifold; ekf as the multiplicative EKF, the
	// sigma-point filters on the tangent error). Without it the filter
	// does not apply to a problem whose Traits.Manifold is set.
	Manifold bool
	// New builds a filter for the model from a full set of parameter values.
	New func(m *filters.Model, v Values) (filters.Filter, error)
}

// Defaults returns the default values of params.
func Defaults(params []Param) Values {
	v := make(Values, len(params))
	for _, p := range params {
		v[p.Name] = p.Default
	}
	return v
}

// ConfigString gives the parameters of v that differ from their defaults
// as key=value pairs in key order, joined by single spaces.
func ConfigString(params []Param, v Values) string {
	var parts []string
	for _, p := range params {
		if got, ok := v[p.Name]; ok && got != p.Default {
			parts = append(parts, p.Name+"="+got.Format(p.Kind))
		}
	}
	sort.Strings(parts)
	return strings.Join(parts, " ")
}

// check validates a value against its parameter description.
func (p Param) check(v Value) error {
	switch p.Kind {
	case Int, Float:
		if p.Kind == Int && v.Num != float64(int64(v.Num)) {
			return fmt.Errorf("%s must be an integer, got %v", p.Name, v.Num)
		}
		if (p.Min != 0 || p.Max != 0) && (v.Num < p.Min || v.Num > p.Max) {
			return fmt.Errorf("%s must be in [%s, %s], got %s", p.Name,
				Value{Num: p.Min}.Format(p.Kind), Value{Num: p.Max}.Format(p.Kind), v.Format(p.Kind))
		}
	case String:
		if len(p.Choices) > 0 {
			for _, c := range p.Choices {
				if c == v.Str {
					return nil
				}
			}
			return fmt.Errorf("%s must be one of %s, got %q", p.Name, strings.Join(p.Choices, ", "), v.Str)
		}
	}
	return nil
}
