package bench

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"sync"
	"time"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/metrics"
)

// Options control how a suite is run. They never change its results.
type Options struct {
	// Workers is the number of runs computed in parallel. If zero,
	// runtime.GOMAXPROCS(0) is used.
	Workers int
	// Progress, if not nil, is called after each finished run of a problem
	// (all its filters), from one goroutine, with the runs done and total.
	Progress func(done, total int)
	// OnRun, if not nil, receives each run's scalar result in a
	// deterministic order (problem, then run, then filter as in the suite).
	OnRun func(p *Pair, st metrics.RunStat)
}

// Pair is the result of one filter configuration on one problem.
type Pair struct {
	Problem       string // problem name, with its non-default parameters in brackets
	Filter        string // filter name
	Config        string // non-default filter parameters, "key=value ..." in key order
	Applicable    bool
	Note          string // why the pair does not apply; empty when it does
	Summary       metrics.Summary
	Curves        []metrics.CurvePoint
	AllocsPerStep float64 // measured on run 0, steps only, after set-up
	// EvalsPerStep is the number of model evaluations per step on run 0,
	// counted by the harness (see countingModel): a cost that does not
	// depend on the machine. NaN when the probe run could not step.
	EvalsPerStep float64
}

// Outcome is the result of a whole suite.
type Outcome struct {
	Suite      *Suite
	Pairs      []*Pair // in suite order: problems, then filters
	Start, End time.Time
}

// ErrRunFailed is returned (wrapped) when a suite cannot be run at all.
var ErrRunFailed = errors.New("bench: run failed")

// problemPlan is what the runner needs for one problem of the suite.
type problemPlan struct {
	cfg     ProblemConfig
	key     string // identity for stream derivation: name and all values
	label   string
	filters []FilterConfig // applicable configurations
	pairs   []*Pair        // their result rows
	purpose []string       // stream purpose of each configuration
}

// Run runs every applicable (problem, filter configuration) pair of the suite
// over s.Runs Monte Carlo runs.
func Run(s *Suite, opt Options) (*Outcome, error) {
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	out := &Outcome{Suite: s, Start: time.Now().UTC()}
	counts := map[string]int{}
	for _, pc := range s.Problems {
		counts[pc.Spec.Name]++
	}
	var plans []*problemPlan
	for _, pc := range s.Problems {
		prob, err := pc.Spec.Build(pc.Values)
		if err != nil {
			return nil, fmt.Errorf("%w: problem %s: %v", ErrRunFailed, pc.Spec.Name, err)
		}
		pl := &problemPlan{cfg: pc, key: problemKey(pc), label: problemLabel(pc, counts[pc.Spec.Name] > 1)}
		for _, fc := range s.Filters {
			p := &Pair{Problem: pl.label, Filter: fc.Spec.Name, Config: fc.Config}
			out.Pairs = append(out.Pairs, p)
			if prob.Traits.Manifold != "" && !fc.Spec.Manifold {
				p.Note = fc.Spec.Name + " does not support a state on a manifold; " + pl.label + " " + prob.Traits.Manifold
				continue
			}
			if ok, why := fc.Spec.Applies(prob.Traits); !ok {
				p.Note = fc.Spec.Name + " " + strings.ReplaceAll(why, "{problem}", pl.label)
				continue
			}
			if _, err := fc.Spec.New(&prob.Model, fc.Values); err != nil {
				p.Note = "cannot be set up: " + err.Error()
				continue
			}
			p.Applicable = true
			pl.filters = append(pl.filters, fc)
			pl.pairs = append(pl.pairs, p)
			pl.purpose = append(pl.purpose, "filter "+fc.Spec.Name+" "+canonicalValues(fc.Spec.Params, fc.Values))
		}
		plans = append(plans, pl)
	}
	total := len(plans) * s.Runs
	done := 0
	for _, pl := range plans {
		if err := runProblem(s, pl, workers, opt, &done, total); err != nil {
			return nil, err
		}
	}
	out.End = time.Now().UTC()
	return out, nil
}

func problemKey(pc ProblemConfig) string {
	return pc.Spec.Name + " " + canonicalValues(pc.Spec.Params, pc.Values)
}

func problemLabel(pc ProblemConfig, dup bool) string {
	c := ConfigString(pc.Spec.Params, pc.Values)
	if c == "" {
		return pc.Spec.Name
	}
	return pc.Spec.Name + "(" + c + ")"
}

// canonicalValues writes every value of a configuration in parameter order.
func canonicalValues(params []Param, v Values) string {
	var b strings.Builder
	for i, p := range params {
		if i > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(p.Name + "=" + v[p.Name].Format(p.Kind))
	}
	return b.String()
}

// jobResult holds the traces of every configuration for one run.
type jobResult struct {
	run    int
	traces []metrics.RunTrace
	ess    [][]float64 // ESS buffer of each configuration's trace
}

func runProblem(s *Suite, pl *problemPlan, workers int, opt Options, done *int, total int) error {
	nf := len(pl.filters)
	if nf == 0 {
		*done += s.Runs
		if opt.Progress != nil {
			opt.Progress(*done, total)
		}
		return nil
	}
	if workers > s.Runs {
		workers = s.Runs
	}
	ws := make([]*worker, workers)
	for i := range ws {
		w, err := newWorker(s, pl)
		if err != nil {
			return err
		}
		ws[i] = w
	}
	prob := ws[0].prob
	steps, nz := prob.Steps, prob.Model.Nz
	dof := prob.Model.Nd() // NEES degrees of freedom
	if prob.NEESComps != nil {
		dof = len(prob.NEESComps)
	}

	// Allocation and evaluation probe: run 0 of each configuration, alone,
	// steps only, before the timed runs, which are therefore not slowed
	// by the counting.
	for c := range pl.filters {
		pl.pairs[c].AllocsPerStep, pl.pairs[c].EvalsPerStep = ws[0].probe(c)
	}

	accs := make([]*metrics.Accumulator, nf)
	for c := range accs {
		accs[c] = metrics.NewAccumulator(steps, dof, nz)
		accs[c].NoTruth = prob.NoTruth
		accs[c].Replayed = prob.Replayed
	}

	// A fixed pool of result buffers bounds memory whatever the number of runs.
	free := make(chan *jobResult, 2*workers)
	for i := 0; i < 2*workers; i++ {
		jr := &jobResult{traces: make([]metrics.RunTrace, nf), ess: make([][]float64, nf)}
		for c := range jr.traces {
			jr.traces[c] = newTrace(steps)
			jr.ess[c] = make([]float64, steps)
		}
		free <- jr
	}
	jobs := make(chan int)
	results := make(chan *jobResult, 2*workers)
	var wg sync.WaitGroup
	for _, w := range ws {
		wg.Add(1)
		go func(w *worker) {
			defer wg.Done()
			// Take a buffer before a job: whoever holds the lowest unfinished
			// run then always has a buffer for it, so the ordered collection
			// below cannot wait on a run that waits on a buffer.
			for {
				jr := <-free
				r, ok := <-jobs
				if !ok {
					free <- jr
					return
				}
				jr.run = r
				w.run(r, jr)
				results <- jr
			}
		}(w)
	}
	go func() {
		for r := 0; r < s.Runs; r++ {
			jobs <- r
		}
		close(jobs)
		wg.Wait()
		close(results)
	}()

	// Collect in run order so every sum is formed in the same order
	// whatever the number of workers.
	pending := map[int]*jobResult{}
	next := 0
	for jr := range results {
		pending[jr.run] = jr
		for {
			cur, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			for c := range cur.traces {
				accs[c].Add(&cur.traces[c])
				if opt.OnRun != nil {
					opt.OnRun(pl.pairs[c], metrics.RunStatOf(&cur.traces[c]))
				}
			}
			free <- cur
			next++
			*done++
			if opt.Progress != nil {
				opt.Progress(*done, total)
			}
		}
	}
	for c, p := range pl.pairs {
		bootSeed, _ := streamSeed(s.Seed, pl.key, -1, pl.purpose[c]+" bootstrap")
		p.Summary = accs[c].Summary(bootSeed)
		p.Curves = accs[c].Curves()
		p.Summary.Warnings = append(p.Summary.Warnings, scoringNotes(prob)...)
	}
	return nil
}

// scoringNotes says how a problem's scores read when that is not plain:
// their unit and the steps scored.
func scoringNotes(p *datasets.Problem) []string {
	var n []string
	if p.ScoreUnit != "" {
		n = append(n, "rmse in "+p.ScoreUnit)
	}
	if p.Eval != nil {
		c := 0
		for _, e := range p.Eval {
			if e {
				c++
			}
		}
		n = append(n, fmt.Sprintf("rmse and anees over the %d of %d steps the data mark for evaluation", c, len(p.Eval)))
	}
	return n
}

func newTrace(steps int) metrics.RunTrace {
	return metrics.RunTrace{
		SqErr: make([]float64, steps),
		NEES:  make([]float64, steps),
		NIS:   make([]float64, steps),

		PredSqErr: make([]float64, steps),
	}
}

// worker owns one copy of a problem, its filters and all buffers.
type worker struct {
	suite *Suite
	plan  *problemPlan
	prob  *datasets.Problem
	flts  []filters.Filter
	seq   datasets.Sequence

	dataPCG, fltPCG   rand.PCG
	dataRand, fltRand *rand.Rand

	// per-step estimates of the configuration being run
	xs, ps, nus, ss []float64
	hasInn          []bool
	ess             []float64
	err, work       []float64 // state error (Nd) and normalisation workspace
	esub, psub      []float64 // error and covariance of the NEESComps
	step            int       // step being run, for panic reports
	stepErr         error     // why filterSteps stopped early
}

func newWorker(s *Suite, pl *problemPlan) (*worker, error) {
	prob, err := pl.cfg.Spec.Build(pl.cfg.Values)
	if err != nil {
		return nil, fmt.Errorf("%w: problem %s: %v", ErrRunFailed, pl.cfg.Spec.Name, err)
	}
	w := &worker{suite: s, plan: pl, prob: prob}
	w.dataRand = rand.New(&w.dataPCG)
	w.fltRand = rand.New(&w.fltPCG)
	for _, fc := range pl.filters {
		f, err := fc.Spec.New(&prob.Model, fc.Values)
		if err != nil {
			return nil, fmt.Errorf("%w: filter %s: %v", ErrRunFailed, fc.Spec.Name, err)
		}
		w.flts = append(w.flts, f)
	}
	k, nx, nz, nd := prob.Steps, prob.Model.Nx, prob.Model.Nz, prob.Model.Nd()
	w.xs = make([]float64, k*nx)
	w.ps = make([]float64, k*nd*nd)
	w.nus = make([]float64, k*nz)
	w.ss = make([]float64, k*nz*nz)
	w.hasInn = make([]bool, k)
	w.ess = make([]float64, k)
	w.err = make([]float64, nd)
	ne := len(prob.NEESComps)
	w.esub, w.psub = make([]float64, ne), make([]float64, ne*ne)
	n := max(nd, nz)
	w.work = make([]float64, n*n+n)
	return w, nil
}

// run computes run r of every configuration into jr.
func (w *worker) run(r int, jr *jobResult) {
	stream(&w.dataPCG, w.suite.Seed, w.plan.key, r, "data")
	w.prob.Run(&w.seq, w.dataRand)
	for c := range w.flts {
		w.runFilter(c, r, &jr.traces[c], jr.ess[c])
	}
}

// probe runs configuration c alone on run 0, after set-up, and returns its
// heap allocations and model evaluations per step. It builds its own copy
// of the filter over a counting copy of the model (countingModel); the
// counters allocate nothing, so the allocations are those of the filter.
// Call it while no other run is in progress.
//
// A panic in the probe is not reported here: probe returns NaN and the
// same run, repeated as part of the suite, records the divergence.
func (w *worker) probe(c int) (allocs, evals float64) {
	defer func() {
		if recover() != nil {
			allocs, evals = math.NaN(), math.NaN()
		}
	}()
	var n evalCount
	cm := countingModel(w.prob.Model, &n)
	fc := w.plan.filters[c]
	f, err := fc.Spec.New(&cm, fc.Values)
	if err != nil {
		return math.NaN(), math.NaN()
	}
	stream(&w.dataPCG, w.suite.Seed, w.plan.key, 0, "data")
	w.prob.Run(&w.seq, w.dataRand)
	// MemStats counts every goroutine's allocations, the runtime's own
	// included (its scavenger's timer, a collection's workers): the run is
	// measured twice, after a collection each time, and the smaller count
	// kept. A filter that allocates does so both times.
	var mallocs uint64
	k := 0
	for pass := 0; pass < 2; pass++ {
		stream(&w.fltPCG, w.suite.Seed, w.plan.key, 0, w.plan.purpose[c])
		if err := f.Reset(w.prior(), w.prob.P0, w.fltRand); err != nil {
			return math.NaN(), math.NaN()
		}
		if pass == 0 {
			n.evals = 0 // set-up and Reset are not steps
		}
		runtime.GC()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		k = w.filterSteps(f)
		runtime.ReadMemStats(&after)
		if k == 0 {
			return math.NaN(), math.NaN()
		}
		if m := after.Mallocs - before.Mallocs; pass == 0 || m < mallocs {
			mallocs = m
		}
		if pass == 0 {
			evals = float64(n.evals) / float64(k)
		}
	}
	return float64(mallocs) / float64(k), evals
}

// evalCount is the counter behind countingModel.
type evalCount struct{ evals int64 }

// countingModel returns a copy of m whose functions count their
// evaluations into n before calling m's: one per state passed through F,
// FW, H or HV, len(x)/Nx for each FMany or HMany call (one per state of
// the batch), one per MeasLogLik and one per Jacobian (FJac, HJac). A
// filter that has no Jacobian and differences F instead is charged its F
// calls. Nil functions stay nil, so the filters' fallbacks are unchanged.
// The matrices are shared with m, which filters only read.
func countingModel(m filters.Model, n *evalCount) filters.Model {
	nx := int64(m.Nx)
	one := func(g func(dst, x []float64, k int)) func(dst, x []float64, k int) {
		if g == nil {
			return nil
		}
		return func(dst, x []float64, k int) { n.evals++; g(dst, x, k) }
	}
	many := func(g func(dst, x []float64, k int)) func(dst, x []float64, k int) {
		if g == nil {
			return nil
		}
		return func(dst, x []float64, k int) { n.evals += int64(len(x)) / nx; g(dst, x, k) }
	}
	m.F, m.H, m.FJac, m.HJac = one(m.F), one(m.H), one(m.FJac), one(m.HJac)
	m.FMany, m.HMany = many(m.FMany), many(m.HMany)
	if fw := m.FW; fw != nil {
		m.FW = func(dst, x, w []float64, k int) { n.evals++; fw(dst, x, w, k) }
	}
	if hv := m.HV; hv != nil {
		m.HV = func(dst, x, v []float64, k int) { n.evals++; hv(dst, x, v, k) }
	}
	if ll := m.MeasLogLik; ll != nil {
		m.MeasLogLik = func(z, x []float64, k int) float64 { n.evals++; return ll(z, x, k) }
	}
	return m
}

// runFilter runs configuration c on the current sequence and scores it.
// It is where a filter's panic is recovered (probe only discards its own): the
// run is then recorded as diverged at the step that panicked, with the reason.
func (w *worker) runFilter(c, r int, tr *metrics.RunTrace, ess []float64) {
	tr.Run = r
	tr.Diverged, tr.DivStep, tr.Reason = false, 0, ""
	tr.NsPerStep = math.NaN()
	tr.ESS = nil
	tr.Repairs = 0
	w.step = 0
	defer func() {
		if v := recover(); v != nil {
			tr.Diverged = true
			tr.DivStep = w.step
			tr.Reason = "panic: " + fmt.Sprint(v) + panicSite()
		}
	}()
	f := w.flts[c]
	stream(&w.fltPCG, w.suite.Seed, w.plan.key, r, w.plan.purpose[c])
	if err := f.Reset(w.prior(), w.prob.P0, w.fltRand); err != nil {
		tr.Diverged, tr.Reason = true, err.Error()
		return
	}
	t0 := time.Now()
	k := w.filterSteps(f)
	el := time.Since(t0)
	if rp, ok := f.(interface{ Repairs() int }); ok {
		tr.Repairs = rp.Repairs()
	}
	if k < w.prob.Steps {
		tr.Diverged, tr.DivStep = true, k+1
		tr.Reason = w.stepErr.Error()
		return
	}
	tr.NsPerStep = float64(el.Nanoseconds()) / float64(k)
	if _, ok := f.(filters.ESSer); ok {
		copy(ess, w.ess)
		tr.ESS = ess
	}
	w.score(tr)
}

// prior is the prior mean of the current run: the sequence's own when it
// draws one (Sequence.Prior), else the problem's.
func (w *worker) prior() []float64 {
	if w.seq.Prior != nil {
		return w.seq.Prior
	}
	return w.prob.X0
}

// filterSteps runs the filter over the current sequence, keeping every
// step's estimate, innovation and ESS, and returns the steps completed.
// Only filter work happens here: it is what ns_per_step and
// allocs_per_step measure.
func (w *worker) filterSteps(f filters.Filter) int {
	m := &w.prob.Model
	nx, nz, nd := m.Nx, m.Nz, m.Nd()
	inn, _ := f.(filters.Innovator)
	esser, _ := f.(filters.ESSer)
	for k := 1; k <= w.prob.Steps; k++ {
		w.step = k
		if err := f.Predict(k); err != nil {
			w.stepErr = err
			return k - 1
		}
		z := w.seq.Meas(k)
		if err := f.Update(z, k); err != nil {
			w.stepErr = err
			return k - 1
		}
		i := k - 1
		f.EstimateTo(w.xs[i*nx:(i+1)*nx], w.ps[i*nd*nd:(i+1)*nd*nd])
		w.hasInn[i] = z != nil && inn != nil && inn.InnovationTo(w.nus[i*nz:(i+1)*nz], w.ss[i*nz*nz:(i+1)*nz*nz])
		if esser != nil {
			w.ess[i] = esser.ESS()
		}
	}
	return w.prob.Steps
}

// score turns the kept estimates into the trace's per-step metrics. A
// non-finite estimate or a covariance that is not positive definite ends
// the run as diverged at that step. For a problem without truth SqErr and
// NEES are NaN (never made up); the estimate and its covariance are still
// checked, the covariance through the NEES of a zero error. Steps the
// problem does not score (Problem.Eval) are checked the same way and get
// NaN. On a manifold the error is the tangent vector truth ⊟ estimate.
func (w *worker) score(tr *metrics.RunTrace) {
	m := &w.prob.Model
	nx, nz, nd := m.Nx, m.Nz, m.Nd()
	noTruth := w.prob.NoTruth
	scale := w.prob.ScoreScale
	if scale == 0 {
		scale = 1
	}
	for k := 1; k <= w.prob.Steps; k++ {
		i := k - 1
		x := w.xs[i*nx : (i+1)*nx]
		// A step not scored is checked like one without truth: its truth
		// may be missing (NaN where a reference lost the target).
		unscored := noTruth || (w.prob.Eval != nil && !w.prob.Eval[i])
		// Its error is zero: the estimate's finiteness is checked on x below.
		switch {
		case unscored:
			clear(w.err)
		case m.Manifold != nil:
			m.Manifold.Minus(w.err, w.seq.State(k), x)
		default:
			truth := w.seq.State(k)
			for j := range x {
				w.err[j] = x[j] - truth[j]
			}
			for _, j := range m.AngleState {
				w.err[j] = filters.WrapAngle(w.err[j])
			}
		}
		var se, all float64
		for _, j := range w.prob.Scored {
			e := w.err[j] * scale
			se += e * e
		}
		for _, v := range x {
			all += v
		}
		if math.IsNaN(se) || math.IsInf(se, 0) || math.IsNaN(all) || math.IsInf(all, 0) {
			tr.Diverged, tr.DivStep, tr.Reason = true, k, "estimate not finite"
			return
		}
		p := w.ps[i*nd*nd : (i+1)*nd*nd]
		e := w.err
		if cs := w.prob.NEESComps; cs != nil {
			for a, ca := range cs {
				w.esub[a] = w.err[ca]
				for b, cb := range cs {
					w.psub[a*len(cs)+b] = p[ca*nd+cb]
				}
			}
			e, p = w.esub, w.psub
		}
		nees, ok := metrics.Normalised(e, p, w.work)
		if !ok || math.IsNaN(nees) || math.IsInf(nees, 0) {
			tr.Diverged, tr.DivStep, tr.Reason = true, k, "covariance not positive definite"
			return
		}
		tr.SqErr[i] = se
		tr.NEES[i] = nees
		if unscored {
			tr.SqErr[i], tr.NEES[i] = math.NaN(), math.NaN()
		}
		tr.NIS[i] = math.NaN()
		tr.PredSqErr[i] = math.NaN()
		if w.hasInn[i] {
			nu := w.nus[i*nz : (i+1)*nz]
			var p float64
			for _, v := range nu {
				p += v * v
			}
			tr.PredSqErr[i] = p
			if nis, ok := metrics.Normalised(nu, w.ss[i*nz*nz:(i+1)*nz*nz], w.work); ok {
				tr.NIS[i] = nis
			}
		}
	}
}

// panicSite names the function and line where a recovered panic started.
func panicSite() string {
	pc := make([]uintptr, 32)
	n := runtime.Callers(3, pc)
	frames := runtime.CallersFrames(pc[:n])
	for {
		fr, more := frames.Next()
		if !strings.HasPrefix(fr.Function, "runtime.") && fr.Function != "" {
			file := fr.File
			if i := strings.LastIndex(file, "/"); i >= 0 {
				file = file[i+1:]
			}
			return fmt.Sprintf(" (in %s at %s:%d)", fr.Function, file, fr.Line)
		}
		if !more {
			return ""
		}
	}
}
