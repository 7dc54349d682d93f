package diagnose

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"
	"sort"
	"sync"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// The posterior stage. Every port is weighed against a set of hypotheses: healthy, each cause
// of the design contract alone, each pair of causes, and an unexplained remainder (trouble no
// cause describes). For hypothesis H,
//
//	P(H | data) ∝ P(H) · Π_k P(o_k | H)^(1/T) · exp(Σ LLR_H / T)
//
// where o_k are the port's coarse observables (noise pattern, received power, OSNR, transmit
// power, dark samples; each read from its column, and simply left out — marginalised — when
// the log lacks the column), LLR_H are the column tests of the cause's own estimates (the
// natural log of how much more likely the observation is with the cause than on a healthy port;
// docs/diagnosis.md lists them), and T is the calibration temperature (rules
// posterior_temperature; C. Guo et al., ICML 2017). The posterior is normalised over all
// hypotheses, so the probabilities of healthy, unexplained and the causes add up to 1; a cause's
// confidence is its marginal posterior: the sum over the hypotheses that contain it (alone or in
// a pair). This is naive Bayes (observables treated as independent given the hypothesis), which
// is why the temperature is fitted on a labelled corpus rather than assumed to be 1.

// Hypothesis ids beside the cause ids (typed CauseID so the likelihood tables take both).
const (
	HypHealthy     CauseID = "healthy"
	HypUnexplained CauseID = "unexplained"
)

// Listing floors (common practice, chosen on the calibration corpus, docs/diagnosis.md).
const (
	// listFloor: a cause with at least this marginal posterior is listed on any port.
	listFloor = 0.2
	// differentialFloor: on a port in trouble (Q short, bursts, uncorrected blocks or a breached
	// criterion) the top differentialSize causes with at least this posterior are listed, and
	// always the most likely one: a troubled port never goes without a ranked differential.
	differentialFloor = 0.05
	differentialSize  = 3
	// llrExonerated: the cause's own estimate is in the log and normal. A DSP estimate that
	// misses its own impairment is rare: about 1 in 20 (common practice, judgement) → ln(0.05).
	llrExonerated = -3.0
	// pairWeight scales the prior of a pair of causes over the product of their priors: 1 is
	// independence (common practice).
	pairWeight = 1.0
)

// Observable states. Index 0 of every table is the first state listed.
type noiseState int

const (
	noiseUnknown  noiseState = iota - 1
	noiseClean               // median Q margin at least the marginal band, no bursts
	noiseMarginal            // median (or the judged statistic of the) Q margin inside the marginal band
	noiseFailing             // median Q below the FEC-threshold Q
	noiseBursts              // median fine, but BER or uncorrected-block bursts
)

type powerState int

const (
	powerUnknown powerState = iota - 1
	powerNormal             // inside the window and its bands, steady
	powerLow                // below or within the band of the sensitivity limit
	powerHigh               // above or within the band of the overload limit
	powerStep               // inside the window but stepped or decaying by power_step_db or more
)

type osnrState int

const (
	osnrUnknown osnrState = iota - 1
	osnrOK                // reported OSNR above the required OSNR plus the marginal band
	osnrLow               // within the band or below the requirement
)

type txState int

const (
	txUnknown txState = iota - 1
	txSteady
	txChanged // out of the module's range, stepped, or away from the plan by power_step_db
)

type darkState int

const (
	darkNone darkState = iota
	darkSome           // samples without light
)

// observables are the coarse states of one port.
type observables struct {
	noise noiseState
	power powerState
	osnr  osnrState
	tx    txState
	dark  darkState
}

// Likelihood tables P(state | hypothesis), rows summing to 1; the row "" applies to every
// cause without its own. These are engineering judgement (common practice), written as the
// physics says each fault shows: loss before the last amplifier lowers OSNR with power held;
// loss after it lowers power; polarization transients give bursts on a clean median; a
// mismatched route or an off-grid carrier usually leaves the signal clean. The DSP error models
// behind the state boundaries: the reported OSNR of an in-band estimator is good to about ±1 dB
// (common practice), so the 2 dB marginal band is about 2σ; received power monitors are good to
// about ±0.5 dB (common practice), well inside the 2 dB bands; Q derived from BER over a
// one-minute count of ~10¹⁰ bits has a negligible counting error above BER 1e-8.
var (
	noiseLik = map[CauseID][4]float64{
		HypHealthy:             {0.975, 0.015, 0.0005, 0.0095},
		HypUnexplained:         {0.25, 0.25, 0.25, 0.25},
		CauseOSNRLow:           {0.30, 0.30, 0.35, 0.05},
		CauseRxPowerLow:        {0.40, 0.25, 0.25, 0.10},
		CauseRxOverload:        {0.40, 0.25, 0.25, 0.10},
		CauseCDMismatch:        {0.90, 0.05, 0.03, 0.02},
		CauseCDOverLimit:       {0.15, 0.25, 0.55, 0.05},
		CausePMD:               {0.45, 0.15, 0.15, 0.25},
		CauseSOPTransient:      {0.05, 0.03, 0.02, 0.90},
		CausePDLHigh:           {0.40, 0.25, 0.25, 0.10},
		CauseLOOffset:          {0.70, 0.10, 0.10, 0.10},
		CauseNonlinear:         {0.30, 0.30, 0.35, 0.05},
		CauseSignalLoss:        {0.60, 0.10, 0.05, 0.25},
		CauseTxPower:           {0.45, 0.20, 0.25, 0.10},
		CauseFrequencyMismatch: {0.70, 0.12, 0.13, 0.05},
		CauseFiltering:         {0.30, 0.30, 0.35, 0.05},
		CauseTransceiver:       {0.30, 0.30, 0.30, 0.10},
	}
	powerLik = map[CauseID][4]float64{
		HypHealthy:      {0.96, 0.02, 0.01, 0.01},
		HypUnexplained:  {0.55, 0.20, 0.10, 0.15},
		CauseRxPowerLow: {0.02, 0.68, 0.005, 0.295},
		CauseRxOverload: {0.05, 0.01, 0.89, 0.05},
		CauseTxPower:    {0.10, 0.45, 0.10, 0.35},
		CauseSignalLoss: {0.85, 0.05, 0.01, 0.09},
		CauseCDMismatch: {0.75, 0.12, 0.08, 0.05},
		"":              {0.93, 0.03, 0.02, 0.02},
	}
	osnrLik = map[CauseID][2]float64{
		HypHealthy:      {0.99, 0.01},
		HypUnexplained:  {0.70, 0.30},
		CauseOSNRLow:    {0.10, 0.90},
		CauseRxPowerLow: {0.90, 0.10},
		CauseSignalLoss: {0.90, 0.10},
		CauseNonlinear:  {0.97, 0.03},
		"":              {0.95, 0.05},
	}
	txLik = map[CauseID][2]float64{
		HypHealthy:     {0.99, 0.01},
		HypUnexplained: {0.80, 0.20},
		CauseTxPower:   {0.10, 0.90},
		"":             {0.98, 0.02},
	}
	darkLik = map[CauseID][2]float64{
		HypHealthy:        {0.995, 0.005},
		HypUnexplained:    {0.80, 0.20},
		CauseSignalLoss:   {0.05, 0.95},
		CauseTxPower:      {0.90, 0.10},
		CauseRxPowerLow:   {0.95, 0.05},
		CauseLOOffset:     {0.95, 0.05},
		CauseSOPTransient: {0.95, 0.05},
		"":                {0.98, 0.02},
	}
)

func row4(t map[CauseID][4]float64, h CauseID) [4]float64 {
	if r, ok := t[h]; ok {
		return r
	}
	return t[""]
}

func row2(t map[CauseID][2]float64, h CauseID) [2]float64 {
	if r, ok := t[h]; ok {
		return r
	}
	return t[""]
}

// stateProbs gives P(observed state | h) for each known observable of the port, k of them
// (unknown observables are left out: marginalised).
func (o observables) stateProbs(h CauseID) (p [numObservables]float64, k int) {
	if o.noise != noiseUnknown {
		p[k], k = row4(noiseLik, h)[o.noise], k+1
	}
	if o.power != powerUnknown {
		p[k], k = row4(powerLik, h)[o.power], k+1
	}
	if o.osnr != osnrUnknown {
		p[k], k = row2(osnrLik, h)[o.osnr], k+1
	}
	if o.tx != txUnknown {
		p[k], k = row2(txLik, h)[o.tx], k+1
	}
	p[k], k = row2(darkLik, h)[o.dark], k+1
	return p, k
}

// numObservables: noise pattern, received power, OSNR, transmit power, dark samples.
const numObservables = 5

// symptomLogLik is Σ_k ln P(o_k | h) over the known observables; a pair of causes takes the
// even mixture of its two rows per observable (either fault may be the one a given observable
// shows), as posterior computes it.
func (o observables) symptomLogLik(h CauseID) float64 {
	p, k := o.stateProbs(h)
	ll := 0.0
	for _, x := range p[:k] {
		ll += math.Log(x)
	}
	return ll
}

// stateLogs holds a natural log for every state of every observable (a cause's state
// probabilities, or a pair's even mixture of them).
type stateLogs struct {
	noise, power   [4]float64
	osnr, tx, dark [2]float64
}

// sumLogs is Σ_k of the logs of the observed states over the known observables, in the order of
// stateProbs: the same sum as adding math.Log of each of stateProbs' probabilities.
func (o observables) sumLogs(l *stateLogs) float64 {
	s := 0.0
	if o.noise != noiseUnknown {
		s += l.noise[o.noise]
	}
	if o.power != powerUnknown {
		s += l.power[o.power]
	}
	if o.osnr != osnrUnknown {
		s += l.osnr[o.osnr]
	}
	if o.tx != txUnknown {
		s += l.tx[o.tx]
	}
	return s + l.dark[o.dark]
}

// causeLogs are the likelihood tables as logs per cause (AllCauses order) and per pair of
// causes (a < b: ln((P(s|a)+P(s|b))/2)), taken once from the tables: the posterior of every
// port weighs every pair.
type causeLogs struct {
	single [numCauses]stateLogs
	pair   [numCauses][numCauses]stateLogs
}

var likLogs = sync.OnceValue(func() *causeLogs {
	var c causeLogs
	mix := func(x, y float64) float64 { return (x + y) / 2 }
	one := func(x, _ float64) float64 { return x }
	fill := func(out *stateLogs, a, b CauseID, f func(x, y float64) float64) {
		na, nb := row4(noiseLik, a), row4(noiseLik, b)
		pa, pb := row4(powerLik, a), row4(powerLik, b)
		for s := range 4 {
			out.noise[s] = math.Log(f(na[s], nb[s]))
			out.power[s] = math.Log(f(pa[s], pb[s]))
		}
		oa, ob := row2(osnrLik, a), row2(osnrLik, b)
		ta, tb := row2(txLik, a), row2(txLik, b)
		da, db := row2(darkLik, a), row2(darkLik, b)
		for s := range 2 {
			out.osnr[s] = math.Log(f(oa[s], ob[s]))
			out.tx[s] = math.Log(f(ta[s], tb[s]))
			out.dark[s] = math.Log(f(da[s], db[s]))
		}
	}
	for a, ia := range AllCauses {
		fill(&c.single[a], ia, ia, one)
		for b := a + 1; b < numCauses; b++ {
			fill(&c.pair[a][b], ia, AllCauses[b], mix)
		}
	}
	return &c
})

// lnPriors are the natural logs of the priors of the causes (AllCauses order), of healthy
// and of unexplained; a prior that is not positive, or not named, counts as unknownPrior.
type lnPriors struct {
	causes               [numCauses]float64
	healthy, unexplained float64
}

// lnPriorMemo keeps lnPriors per rules' priors (read by reflection, so not per port). Bounded.
var lnPriorMemo = memo[rules.Priors, *lnPriors]{max: 256}

func lnPriorsOf(p rules.Priors) *lnPriors {
	if l, ok := lnPriorMemo.load(p); ok {
		return l
	}
	ln := func(id CauseID) float64 {
		if v, ok := p.Of(string(id)); ok && v > 0 {
			return math.Log(v)
		}
		return math.Log(unknownPrior)
	}
	l := &lnPriors{healthy: ln(HypHealthy), unexplained: ln(HypUnexplained)}
	for i, id := range AllCauses {
		l.causes[i] = ln(id)
	}
	lnPriorMemo.store(p, l)
	return l
}

// observe reads the port's observables from its derived series and findings.
func (pc *portCtx) observe() observables {
	o := observables{noise: noiseUnknown, power: powerUnknown, osnr: osnrUnknown, tx: txUnknown}
	p, r := pc.prof, pc.r
	if qm := pc.qMarginP50(); finite(qm) {
		switch {
		case qm < 0:
			o.noise = noiseFailing
		case qm < r.QMarginalMarginDB:
			o.noise = noiseMarginal
		case len(pc.an.BERBursts) > 0 || pc.litBlockBursts() > 0:
			o.noise = noiseBursts
		case pick(pc.summaryOf(pc.lit(pc.qdb), parse.QdB), pc.stat.q)-pc.qLimitDB < r.QMarginalMarginDB:
			o.noise = noiseMarginal // the judged statistic (min by default) is inside the band
		default:
			o.noise = noiseClean
		}
	}
	if pc.has(parse.RxPowerDBm) {
		if lp := pc.litPowerSummary(); lp.N > 0 {
			o.power = powerNormal
			win := p.RxPowerMaxDBm > p.RxPowerMinDBm
			switch {
			case win && (lp.P50 < p.RxPowerMinDBm+r.RxPowerMarginalBandDB || lp.Min < p.RxPowerMinDBm):
				o.power = powerLow
			case win && (lp.P50 > p.RxPowerMaxDBm-r.RxPowerMarginalBandDB || lp.Max > p.RxPowerMaxDBm):
				o.power = powerHigh
			case pc.powerMoved():
				o.power = powerStep
			}
		}
	}
	if pc.has(parse.OSNRdB) && pc.reqOSNRdB > 0 {
		o.osnr = osnrOK
		if pick(pc.sum[parse.OSNRdB], pc.stat.osnr) < pc.reqOSNRdB+r.OSNRMarginalMarginDB {
			o.osnr = osnrLow
		}
	}
	if pc.has(parse.TxPowerDBm) {
		o.tx = txSteady
		if pc.txChange().changed {
			o.tx = txChanged
		}
	}
	if len(pc.darkKinds().noLight) > 0 {
		o.dark = darkSome
	}
	return o
}

// powerMoved: the lit received power stepped, or decayed significantly, by power_step_db or more.
func (pc *portCtx) powerMoved() bool {
	for _, st := range pc.an.PowerSteps {
		if math.Abs(st.Step) >= pc.r.PowerStepDB {
			return true
		}
	}
	if t := pc.an.RxPowerTrend; t != nil && pc.trendSignificant(t) {
		return math.Abs(t.Slope)*float64(t.EndMs-t.StartMs)/3.6e6 >= pc.r.PowerStepDB
	}
	return false
}

// litBlockBursts counts the uncorrected-block bursts outside dark samples.
func (pc *portCtx) litBlockBursts() int {
	ub := pc.s.Values[parse.UncorrectedBlocks]
	if ub == nil {
		return 0
	}
	n := 0
	for i, v := range ub {
		if v > 0 && !pc.dark[i] {
			n++
		}
	}
	return n
}

// posterior weighs every hypothesis and returns the marginal posterior of each cause and the
// posterior of healthy and of unexplained. scores holds the column tests by cause id.
func (pc *portCtx) posterior(o observables, scores map[CauseID]*score) (causes map[CauseID]float64, healthy, unexplained float64) {
	T := pc.r.PosteriorTemperature
	if !(T > 0) {
		T = 1
	}
	pr := lnPriorsOf(pc.r.Priors)
	// Per cause: ln prior, Σ LLR, and the logs of the probability of each observed state and
	// of each pair's mixture, looked up in the tables of logs (likLogs).
	const n = numCauses
	lp := &pr.causes
	var llr [n]float64
	for i, id := range AllCauses {
		if s := scores[id]; s != nil {
			llr[i] = s.sum()
		}
	}
	ll := likLogs()
	type hyp struct {
		a, b int // cause indices; b < 0 for a single cause; a < 0: healthy (−1) or unexplained (−2)
		logw float64
	}
	hs := make([]hyp, 0, 2+n+n*(n-1)/2) // one allocation per port
	hs = append(hs,
		hyp{-1, -1, pr.healthy + o.symptomLogLik(HypHealthy)/T},
		hyp{-2, -1, pr.unexplained + o.symptomLogLik(HypUnexplained)/T})
	for a := 0; a < n; a++ {
		hs = append(hs, hyp{a, -1, lp[a] + (o.sumLogs(&ll.single[a])+llr[a])/T})
		for b := a + 1; b < n; b++ {
			hs = append(hs, hyp{a, b, math.Log(pairWeight) + lp[a] + lp[b] + (o.sumLogs(&ll.pair[a][b])+llr[a]+llr[b])/T})
		}
	}
	top := math.Inf(-1)
	for _, h := range hs {
		top = math.Max(top, h.logw)
	}
	total := 0.0
	for i := range hs {
		hs[i].logw = math.Exp(hs[i].logw - top) // from here on the unnormalised weight
		total += hs[i].logw
	}
	var marg [n]float64
	for _, h := range hs {
		p := h.logw / total
		switch {
		case h.a == -1:
			healthy = p
		case h.a == -2:
			unexplained = p
		default:
			marg[h.a] += p
			if h.b >= 0 {
				marg[h.b] += p
			}
		}
	}
	causes = make(map[CauseID]float64, n)
	for i, id := range AllCauses {
		causes[id] = marg[i]
	}
	return causes, healthy, unexplained
}

// inTrouble: the port's signal shows trouble (Q short or bursty, uncorrected blocks on lit
// samples, samples without light) or a criterion is marginal or failing.
func (pc *portCtx) inTrouble(o observables, criteria []Criterion) bool {
	if o.noise == noiseMarginal || o.noise == noiseFailing || o.noise == noiseBursts || o.dark == darkSome || pc.litBlockBursts() > 0 {
		return true
	}
	for _, c := range criteria {
		if c.Verdict == Marginal || c.Verdict == Fail {
			return true
		}
	}
	return false
}

// symptomEvidence words the observables that argue for (or, "Against:", against) cause id
// compared with a healthy port, with the port's numbers.
func (pc *portCtx) symptomEvidence(id CauseID, o observables) []item {
	var out []item
	add := func(pc4 float64, ph float64, text string) {
		if l := math.Log(pc4 / ph); math.Abs(l) >= minEvidenceLLR {
			out = append(out, item{llr: l, text: text})
		}
	}
	qm, lp := pc.qMarginP50(), pc.litPowerSummary()
	switch o.noise {
	case noiseFailing:
		add(row4(noiseLik, id)[o.noise], noiseLik[HypHealthy][o.noise], fmt.Sprintf("The median Q of the lit samples is %.2f dB below the FEC-threshold Q of %.2f dB: the port runs beyond the FEC most of the time, not in bursts.", -qm, pc.qLimitDB))
	case noiseMarginal:
		add(row4(noiseLik, id)[o.noise], noiseLik[HypHealthy][o.noise], fmt.Sprintf("The median Q margin of the lit samples is only %.2f dB, inside the %.1f dB marginal band: a steady loss of signal quality.", qm, pc.r.QMarginalMarginDB))
	case noiseBursts:
		add(row4(noiseLik, id)[o.noise], noiseLik[HypHealthy][o.noise], fmt.Sprintf("%s and %s with uncorrected blocks on a median Q margin of %.2f dB: the trouble comes in bursts, not as a steady loss.", words.Plural(len(pc.an.BERBursts), "BER burst", "BER bursts"), words.Plural(pc.litBlockBursts(), "interval", "intervals"), qm))
	}
	switch o.power {
	case powerNormal:
		add(row4(powerLik, id)[o.power], powerLik[HypHealthy][o.power], fmt.Sprintf("Received power is normal and steady (median %.1f dBm, no step or decay of %.1f dB or more): the receive path loses no light.", lp.P50, pc.r.PowerStepDB))
	case powerLow:
		add(row4(powerLik, id)[o.power], powerLik[HypHealthy][o.power], fmt.Sprintf("Received power is low: median %.1f dBm, minimum %.1f dBm against the %.1f dBm sensitivity limit.", lp.P50, lp.Min, pc.prof.RxPowerMinDBm))
	case powerHigh:
		add(row4(powerLik, id)[o.power], powerLik[HypHealthy][o.power], fmt.Sprintf("Received power is high: median %+.1f dBm, maximum %+.1f dBm against the %+.1f dBm overload limit.", lp.P50, lp.Max, pc.prof.RxPowerMaxDBm))
	case powerStep:
		add(row4(powerLik, id)[o.power], powerLik[HypHealthy][o.power], fmt.Sprintf("Received power moved by %.1f dB or more during the log (median %.1f dBm).", pc.r.PowerStepDB, lp.P50))
	}
	if o.osnr != osnrUnknown {
		v := pick(pc.sum[parse.OSNRdB], pc.stat.osnr)
		text := fmt.Sprintf("Reported OSNR %.1f dB (%s) is %.1f dB above the %.1f dB the module needs.", v, pc.stat.osnr, v-pc.reqOSNRdB, pc.reqOSNRdB)
		switch {
		case o.osnr == osnrLow && v < pc.reqOSNRdB:
			text = fmt.Sprintf("Reported OSNR %.1f dB (%s) is below the %.1f dB the module needs.", v, pc.stat.osnr, pc.reqOSNRdB)
			if id == CauseOSNRLow {
				text = "" // osnr-low's own test says it with the shortfall
			}
		case o.osnr == osnrLow:
			text = fmt.Sprintf("Reported OSNR %.1f dB (%s) leaves only %.1f dB over the %.1f dB the module needs.", v, pc.stat.osnr, v-pc.reqOSNRdB, pc.reqOSNRdB)
		}
		if text != "" {
			add(row2(osnrLik, id)[o.osnr], osnrLik[HypHealthy][o.osnr], text)
		}
	}
	if o.tx == txChanged && id != CauseTxPower { // tx-power's own test says it
		add(row2(txLik, id)[o.tx], txLik[HypHealthy][o.tx], pc.txChange().text)
	}
	return out
}

// list turns the posterior into the port's causes: every cause at or above listFloor, every
// cause a breached criterion owns (forced), and on a port in trouble the top of the
// differential. Confidence is the marginal posterior.
func (pc *portCtx) list(o observables, criteria []Criterion, scores map[CauseID]*score, post map[CauseID]float64, forced map[CauseID]bool) []Cause {
	out := []Cause{}
	// The causes by descending posterior, ties in AllCauses order: the insertion sort that
	// sort.SliceStable runs on fewer than 20 elements, on the posteriors read once.
	var ranked [numCauses]CauseID
	var pr [numCauses]float64
	for i, id := range AllCauses {
		ranked[i], pr[i] = id, post[id]
	}
	for i := 1; i < numCauses; i++ {
		for j := i; j > 0 && pr[j] > pr[j-1]; j-- {
			ranked[j], ranked[j-1] = ranked[j-1], ranked[j]
			pr[j], pr[j-1] = pr[j-1], pr[j]
		}
	}
	trouble := pc.inTrouble(o, criteria)
	for rank, id := range ranked {
		p := pr[rank]
		ok := p >= listFloor || forced[id] ||
			(trouble && ((rank < differentialSize && p >= differentialFloor) || rank == 0))
		if !ok {
			continue
		}
		c := Cause{ID: id, Confidence: math.Round(p*1000) / 1000, Actions: actions[id]}
		var items []item
		if s := scores[id]; s != nil {
			items = append(items, s.items...)
		} else if q, owned := ownColumn[id]; owned && !pc.has(q) {
			prior, _ := pc.r.Priors.Of(string(id))
			items = append(items, item{text: fmt.Sprintf("The log has no %s, so %s is weighed on its prior (%.1f %%) and the pattern of the other columns alone.", q.Column(), id, 100*prior)})
		}
		items = append(items, pc.symptomEvidence(id, o)...)
		if s := scores[id]; (s == nil || !s.supported()) && noiseFamily[id] {
			items = append(items, item{text: fmt.Sprintf("Named from the pattern alone (median Q margin %.2f dB): a loss of signal quality with the light arriving normally is what amplifier noise (osnr-low), fibre nonlinearity (nonlinear), a transceiver fault (transceiver) and filtering give; the next test below tells them apart.", pc.qMarginP50())})
		}
		sort.SliceStable(items, func(i, j int) bool { return items[i].llr > items[j].llr })
		for i := range items {
			if items[i].llr < 0 {
				c.Evidence = append(c.Evidence, "Against: "+items[i].words())
			} else {
				c.Evidence = append(c.Evidence, items[i].words())
			}
		}
		out = append(out, c)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Confidence > out[j].Confidence })
	return out
}

// noiseFamily are the causes that lower the eSNR with the power normal (noise.go).
var noiseFamily = map[CauseID]bool{CauseOSNRLow: true, CauseNonlinear: true, CauseTransceiver: true, CauseFiltering: true}

// ownColumn is the column whose estimate a cause's own tests read; a cause whose column is in
// the log and normal is exonerated (llrExonerated).
var ownColumn = map[CauseID]parse.Quantity{
	CausePMD:               parse.DGDps,
	CausePDLHigh:           parse.PDLdB,
	CauseSOPTransient:      parse.SOPRateKradPerS,
	CauseLOOffset:          parse.LOOffsetMHz,
	CauseCDOverLimit:       parse.CDpsPerNm,
	CauseCDMismatch:        parse.CDpsPerNm,
	CauseFrequencyMismatch: parse.FrequencyTHz,
}

// exonerate adds the "its own estimate is normal" evidence to every cause whose column is in
// the log and whose tests found nothing (cd-mismatch and frequency-mismatch only with a plan).
func (pc *portCtx) exonerate(scores map[CauseID]*score) {
	for id, q := range ownColumn {
		if !pc.has(q) {
			continue
		}
		if (id == CauseCDMismatch || id == CauseFrequencyMismatch) && pc.exp == nil {
			continue
		}
		s := scores[id]
		if s == nil {
			s = &score{id: id}
			scores[id] = s
		}
		if !s.supported() {
			s.items = append(s.items, item{llr: llrExonerated, normal: pc, q: q})
		}
	}
}
