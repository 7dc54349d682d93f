// Package diagnose judges coherent-link telemetry: per-port metrics and criteria against the
// module profile and the link plan, time-series findings, and the likely physical causes of
// trouble with their evidence. The physics lives in diagnose/optics and the statistics in
// diagnose/series; this package combines them. docs/diagnosis.md explains the method.
package diagnose

import (
	"fmt"
	"runtime"
	"sync"
	"time"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Setup is what one port is judged against: its module profile and, when known, its link plan.
type Setup struct {
	Profile rules.Profile
	Plan    *rules.Plan
	// ProfileSource says what chose Profile (ProfileFromMap, …); copied to the result.
	ProfileSource string
	// Line, Peer and Module are the port's topology from the port map; copied to the result.
	Line, Peer string
	Module     *ModuleID
}

// Config says how to judge a Dataset.
type Config struct {
	// Version is written into Result.Version.
	Version string
	// Rules are the thresholds (rules.DefaultRules or a user's file).
	Rules rules.Rules
	// Default is the setup of every port that Lookup does not place.
	Default Setup
	// Lookup, when set, gives a port its own setup (triage with a port map); ok false means
	// "use Default".
	Lookup func(port string) (s Setup, ok bool)
	// Workers bounds the ports analysed at once; 0 means GOMAXPROCS.
	Workers int
	// CorrelationsOnDemand computes the Spearman correlations of a port only when a cause test
	// asks for one: PortAnalysis.Correlations then holds just those (in the order asked).
	// Verdicts, causes, evidence, metrics and criteria are the same either way; it saves the
	// rank sorts of ports whose causes never get that far. False: all of them, as AnalyzePort.
	CorrelationsOnDemand bool
	// Acceptance, when set, judges each port's test-period coverage and error performance too
	// (check and report).
	Acceptance *AcceptanceTest
}

// Analyze judges every port of ds and returns the Result of the design contract, ports sorted
// by service impact (SortByImpact). It fails only when a link plan cannot be modelled (the error names the plan).
func Analyze(ds *parse.Dataset, cfg Config) (*Result, error) {
	res := NewResult(ds, cfg.Version)
	res.Ports = make([]PortResult, len(ds.Series))
	err := NewJudge(cfg).Each(ds.Series, nil, func(i int, p *PortResult) { res.Ports[i] = *p })
	if err != nil {
		return nil, err
	}
	SortByImpact(res.Ports)
	return res, nil
}

// NewResult is the Result of ds without its ports: the tool, version, inputs and the first 1000
// rejections.
func NewResult(ds *parse.Dataset, version string) *Result {
	res := &Result{Tool: "beatnote", Version: version, Inputs: ds.Inputs, Rejected: ds.Rejected}
	if res.Inputs == nil {
		res.Inputs = []parse.InputStats{}
	}
	if len(res.Rejected) > 1000 {
		res.Rejected = res.Rejected[:1000]
	}
	if res.Rejected == nil {
		res.Rejected = []parse.Rejection{}
	}
	return res
}

// Judge judges ports one at a time or a batch at once, with one Config: each port's setup
// (Config.Lookup, else Config.Default) and, per link plan, the plan's expectation
// (optics.ExpectLink), modelled once for all the ports that share the plan.
type Judge struct {
	cfg     Config
	mu      sync.Mutex
	expects map[*rules.Plan]*optics.LinkExpectation
}

// NewJudge prepares the judging of ports with cfg.
func NewJudge(cfg Config) *Judge {
	return &Judge{cfg: cfg, expects: map[*rules.Plan]*optics.LinkExpectation{}}
}

// Setup is the setup port is judged against.
func (j *Judge) Setup(port string) Setup {
	if j.cfg.Lookup != nil {
		if st, ok := j.cfg.Lookup(port); ok {
			return st
		}
	}
	return j.cfg.Default
}

// expect models plan p once; the error names the plan.
func (j *Judge) expect(p *rules.Plan, prof rules.Profile) (*optics.LinkExpectation, error) {
	if p == nil {
		return nil, nil
	}
	j.mu.Lock()
	defer j.mu.Unlock()
	if e, done := j.expects[p]; done {
		return e, nil
	}
	e, err := optics.ExpectLink(*p, prof)
	if err != nil {
		name := p.Circuit
		if name == "" {
			name = "(unnamed circuit)"
		}
		return nil, fmt.Errorf("link plan %s: %w", name, err)
	}
	j.expects[p] = &e
	return &e, nil
}

// Each judges every port of series on Config.Workers goroutines and hands each result to fn
// with the port's index, from the goroutine that judged it (fn must be safe for concurrent
// use; the result is fn's to keep). setups[i], when setups is not nil, is series[i]'s setup;
// else Setup gives it. The plans of all the ports are modelled first, in order: the first that
// cannot be modelled is the error, and nothing is judged.
func (j *Judge) Each(series []*parse.Series, setups []Setup, fn func(i int, p *PortResult)) error {
	if setups == nil {
		setups = make([]Setup, len(series))
		for i, s := range series {
			setups[i] = j.Setup(s.Port)
		}
	}
	for i := range series {
		if _, err := j.expect(setups[i].Plan, setups[i].Profile); err != nil {
			return err
		}
	}
	workers := j.cfg.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < min(workers, len(series)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				p := j.port(series[i], setups[i])
				fn(i, &p)
			}
		}()
	}
	for i := range series {
		next <- i
	}
	close(next)
	wg.Wait()
	return nil
}

// port judges one port whose plan is already modelled.
func (j *Judge) port(s *parse.Series, st Setup) PortResult {
	j.mu.Lock()
	exp := j.expects[st.Plan]
	j.mu.Unlock()
	// The port's columns are decoded for its judging only; the result points at the stored
	// series (see parse.Series.Decoded).
	d := s.Decoded()
	p := analyzePort(d, st.Profile, st.Plan, exp, j.cfg.Rules, j.cfg.CorrelationsOnDemand)
	p.ProfileSource, p.Line, p.Peer, p.Module = st.ProfileSource, st.Line, st.Peer, st.Module
	if j.cfg.Acceptance != nil {
		judgeAcceptance(&p, d, st, j.cfg.Rules, *j.cfg.Acceptance)
	}
	if p.Analysis != nil {
		p.Analysis.Series = s
	}
	return p
}

func topConfidence(p *PortResult) float64 {
	if len(p.Causes) == 0 {
		return 0
	}
	return p.Causes[0].Confidence
}

func qMargin(p *PortResult) float64 {
	if m, ok := p.Metrics[parse.QdB.Column()]; ok && m.Margin != nil {
		return *m.Margin
	}
	return 1e9
}

// AnalyzePort judges one port against a profile and an optional plan (with its expectation,
// from optics.ExpectLink; nil when there is no plan).
func AnalyzePort(s *parse.Series, prof rules.Profile, plan *rules.Plan, exp *optics.LinkExpectation, r rules.Rules) PortResult {
	return analyzePort(s, prof, plan, exp, r, false)
}

func analyzePort(s *parse.Series, prof rules.Profile, plan *rules.Plan, exp *optics.LinkExpectation, r rules.Rules, lazyCorr bool) PortResult {
	// The stages, in order, from newPortCtx: the column summaries, the statistic choice
	// (chooseStatistics: which statistic each criterion judges, a value), derive (per-sample
	// BER, Q, eSNR, dark samples) and the findings (steps, bursts, trends, fits, and the memo of
	// rank correlations), each a function returning its value; compliance (metrics, criteria,
	// plan vs measured): the criteria table returned as a value, the metrics and plan
	// comparison written into the result; then evidence (the column tests, given the
	// criteria), the posterior over the hypotheses, the listed causes and the next test, each
	// returned as a value; the SNR budget; risk notes; the verdict from the criteria and the
	// causes; last the correlations computed on the way. The criteria and the evidence return
	// their "not judged" notes with their values.
	pc := newPortCtx(s, prof, plan, exp, r, lazyCorr)
	pc.res.Metrics = pc.metrics()
	crit := pc.criteria()
	pc.res.Criteria = crit.rows
	pc.res.PlanVsMeasured = pc.planVsMeasured()
	scores, forced, evNotes := pc.evidence(crit.rows, crit.owners)
	pc.res.NotJudged = append(crit.notes, evNotes...)
	o := pc.observe()
	post, healthy, unexplained := pc.posterior(o, scores)
	pc.an.Posterior = post
	pc.res.Posterior = &Posterior{Healthy: round3(healthy), Unexplained: round3(unexplained)}
	pc.res.Causes = pc.list(o, crit.rows, scores, post, forced)
	pc.res.NextTest = pc.nextTest(pc.res.Causes)
	pc.res.Budget = pc.budget()
	pc.res.Risks = pc.risks()
	pc.res.Verdict = verdictOf(crit.rows, pc.res.Causes)
	pc.an.Correlations = pc.corr.list
	addCautions(pc.res)
	return *pc.res
}

func rfc3339(ms int64) string {
	return time.UnixMilli(ms).UTC().Format(time.RFC3339)
}

// clock formats a time for evidence sentences, to the second, UTC.
func clock(ms int64) string {
	return time.UnixMilli(ms).UTC().Format("2006-01-02 15:04:05 UTC")
}
