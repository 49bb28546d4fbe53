package main

import (
	"flag"
	"fmt"
	"io"
	"strings"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/datasets"
)

func cmdList(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("list", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: estbench list\n\nLists every problem and filter with its parameters, defaults, traits and source.\n")
	}
	if err := fs.Parse(args); err != nil {
		return usageExit(err)
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "estbench list: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	writeList(stdout, bench.Builtin())
	return exitOK
}

func writeList(w io.Writer, cat *bench.Catalogue) {
	fmt.Fprintln(w, "Problems")
	for _, p := range cat.Problems {
		fmt.Fprintf(w, "\n  %s — %s\n", p.Name, p.Summary)
		fmt.Fprintf(w, "    source: %s\n", p.Source)
		if prob, err := p.Build(bench.Defaults(p.Params)); err == nil {
			states := fmt.Sprint(prob.Model.Nx)
			if prob.Model.Manifold != nil {
				states += fmt.Sprintf(" (on a manifold: errors and covariances of dimension %d)", prob.Model.Nd())
			}
			fmt.Fprintf(w, "    states %s, measurements %d, steps %d; scored components %v\n",
				states, prob.Model.Nz, prob.Steps, prob.Scored)
			fmt.Fprintf(w, "    traits: %s\n", traitWords(prob.Traits))
		}
		writeParams(w, p.Params)
	}
	fmt.Fprintln(w, "\nFilters")
	for _, f := range cat.Filters {
		fmt.Fprintf(w, "\n  %s — %s\n", f.Name, f.Summary)
		fmt.Fprintf(w, "    source: %s\n", f.Source)
		if f.Traits != "" {
			on := "; not to a state on a manifold"
			if f.Manifold {
				on = "; also to a state on a manifold"
			}
			fmt.Fprintf(w, "    applies to: %s%s\n", f.Traits, on)
		}
		writeParams(w, f.Params)
	}
}

func writeParams(w io.Writer, params []bench.Param) {
	if len(params) == 0 {
		fmt.Fprintln(w, "    parameters: none")
		return
	}
	fmt.Fprintln(w, "    parameters:")
	for _, p := range params {
		extra := p.Kind.String()
		if len(p.Choices) > 0 {
			extra = "one of " + strings.Join(p.Choices, ", ")
		} else if p.Min != 0 || p.Max != 0 {
			extra += fmt.Sprintf(" in [%s, %s]", bench.Value{Num: p.Min}.Format(p.Kind), bench.Value{Num: p.Max}.Format(p.Kind))
		}
		fmt.Fprintf(w, "      %-14s default %-10s %s (%s)\n", p.Name, p.Default.Format(p.Kind), p.Doc, extra)
	}
}

func traitWords(t datasets.Traits) string {
	var w []string
	add := func(ok bool, yes, no string) {
		if ok {
			w = append(w, yes)
		} else if no != "" {
			w = append(w, no)
		}
	}
	add(t.Linear, "linear", "nonlinear")
	add(t.Differentiable, "differentiable", "not differentiable")
	add(t.AnalyticJacobians, "analytic Jacobians", "")
	add(t.AdditiveNoise, "additive noise", "non-additive noise")
	add(t.GaussianNoise, "Gaussian noise", "non-Gaussian noise")
	if t.Manifold != "" {
		w = append(w, "state on a manifold ("+strings.TrimPrefix(t.Manifold, "has ")+")")
	}
	return strings.Join(w, ", ")
}
