package diagnose

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Engine constants that are not module or rule figures. Each is common practice.
const (
	// noLockBER: a pre-FEC BER at or above this is treated as "no signal decoded" — half-way
	// to the 0.5 of random decisions and far beyond any FEC (common practice).
	noLockBER = 0.25
	// burstFloorFraction: a BER burst must also exceed this fraction of the FEC threshold, so
	// ports running at a tiny BER do not count counting noise as bursts (common practice).
	burstFloorFraction = 0.01
	// sopSpikeOverMedian: an SOP spike must also exceed this multiple of the port's median rate.
	sopSpikeOverMedian = 5
	// gapFactor: a time step this many times the usual sample interval is a gap in the samples.
	gapFactor = 5
	// gridStepGHz: the ITU-T G.694.1 flexible DWDM grid places channel centres on 6.25 GHz steps.
	gridStepGHz = 6.25
	// berCountedZero stands for a BER of 0 (no error counted) where a finite Q is needed.
	berCountedZero = 1e-15
	// randomBER is the BER of random decisions, where Q is 0 (−∞ dB).
	randomBER = 0.5
	// qFloorDB is the lowest Q (dB) a summary holds, so that summaries stay finite.
	qFloorDB = -20
)

// portCtx carries one port through the analysis.
type portCtx struct {
	s    *parse.Series
	prof rules.Profile
	plan *rules.Plan
	exp  *optics.LinkExpectation
	r    rules.Rules
	res  *PortResult
	an   *PortAnalysis

	n          int
	intervalMs int64
	derived                                        // the derive stage's value (derive); read, never written, by the later stages
	cols       uint32                              // bit q: the port has column q (a finite sample)
	sum        [parse.NumQuantities]series.Summary // of each column the port has (cols)
	absSum     [parse.NumQuantities]series.Summary // of |x|, for CD and LO offset
	stat       statChoice                          // the statistic each criterion judges (chooseStatistics); read-only

	scratch []float64 // working copy for summaries

	// corr is the findings' rank correlations, each computed on first request (corrMemo).
	corr *corrMemo

	// cache holds summaries several evidence tests use.
	cache struct {
		litPower, q         *series.Summary
		qMargin, esnr       float64
		qMarginSet, esnrSet bool
		dark                *darkKinds
		fwd                 *forward
		tx                  *txChangeInfo
	}

	profileFigures // the model figures of the profile (figuresOf); read-only
}

// profileFigures are the model figures of a profile, the same for every port of the profile.
type profileFigures struct {
	mod           optics.Modulation // zero (not Valid) when the profile's modulation is unknown
	qLimitDB      float64           // Q (dB) at the FEC threshold
	snrThDB       float64           // theoretical Es/N0 at the FEC threshold
	snrTrxDB      float64           // transceiver SNR ceiling
	reqOSNRdB     float64
	trxAssumption string
}

// computeFigures computes the model figures of prof.
func computeFigures(prof rules.Profile) profileFigures {
	var f profileFigures
	if m, err := optics.ParseModulation(prof.Modulation); err == nil {
		f.mod = m
	}
	f.qLimitDB = optics.QdBFromBER(prof.FECThresholdBER)
	f.snrThDB, f.snrTrxDB, f.reqOSNRdB = math.NaN(), math.Inf(1), prof.RequiredOSNRdB
	if f.mod.Valid() && prof.FECThresholdBER > 0 {
		f.snrThDB = optics.SNRdBFromBER(f.mod, prof.FECThresholdBER)
		f.snrTrxDB, f.trxAssumption = transceiverSNRdB(prof, f.snrThDB)
		if !(f.reqOSNRdB > 0) && prof.BaudGBd > 0 {
			f.reqOSNRdB = optics.RequiredOSNRdB(f.mod, prof.BaudGBd, prof.PolarizationCount(), prof.FECThresholdBER, prof.ImplementationPenaltyDB)
		}
	}
	return f
}

// figureKey is every profile field computeFigures reads (floats by their bits, so that −0 and
// +0, or two NaNs, are told apart and alike as computeFigures would).
type figureKey struct {
	modulation                       string
	fec, b2b, penalty, reqOSNR, baud uint64
	pols                             int
}

// memo is a bounded map shared by the judging goroutines, of values that cost a root search and
// are fixed by their key: once full, further keys are computed each time.
type memo[K comparable, V any] struct {
	mu  sync.RWMutex
	m   map[K]V
	max int
}

func (c *memo[K, V]) load(k K) (V, bool) {
	c.mu.RLock()
	v, ok := c.m[k]
	c.mu.RUnlock()
	return v, ok
}

func (c *memo[K, V]) store(k K, v V) {
	c.mu.Lock()
	if c.m == nil {
		c.m = map[K]V{}
	}
	if len(c.m) < c.max {
		c.m[k] = v
	}
	c.mu.Unlock()
}

// figureMemo keeps computeFigures per profile: the root finding behind the eSNR at the FEC
// threshold would otherwise be paid on every port. Bounded: profiles come from files.
var figureMemo = memo[figureKey, profileFigures]{max: 256}

// figuresOf is computeFigures(prof), computed once per profile.
func figuresOf(prof rules.Profile) profileFigures {
	k := figureKey{prof.Modulation, math.Float64bits(prof.FECThresholdBER), math.Float64bits(prof.BackToBackSNRdB),
		math.Float64bits(prof.ImplementationPenaltyDB), math.Float64bits(prof.RequiredOSNRdB), math.Float64bits(prof.BaudGBd),
		prof.PolarizationCount()}
	if f, ok := figureMemo.load(k); ok {
		return f
	}
	f := computeFigures(prof)
	figureMemo.store(k, f)
	return f
}

func newPortCtx(s *parse.Series, prof rules.Profile, plan *rules.Plan, exp *optics.LinkExpectation, r rules.Rules, lazyCorr bool) *portCtx {
	pc := &portCtx{s: s, prof: prof, plan: plan, exp: exp, r: r, n: s.Len()}
	pc.res = &PortResult{
		Port: s.Port, Profile: prof.ID, Samples: s.Len(),
		Causes: []Cause{},
	}
	if plan != nil {
		pc.res.Circuit = plan.Circuit
	}
	if pc.n > 0 {
		pc.res.From, pc.res.To = rfc3339(s.TimesMs[0]), rfc3339(s.TimesMs[pc.n-1])
	}
	pc.intervalMs = medianInterval(s.TimesMs)

	pc.profileFigures = figuresOf(prof)
	pc.summarizeColumns()
	pc.stat = chooseStatistics(s, r)
	pc.derived = derive(s, pc.mod, r.SignalLossFloorDBm)
	an, corr := pc.findings(lazyCorr)
	an.Series, an.Profile, an.Plan, an.Expected = s, prof, plan, exp
	an.FECLimitQdB, an.RequiredESNRdB = pc.qLimitDB, pc.snrThDB
	pc.an, pc.corr = &an, corr
	pc.res.Analysis = pc.an
	return pc
}

// summaryOf is the summary of v: when v is the port's own column q (not a derived copy), the
// one summarizeColumns already computed.
func (pc *portCtx) summaryOf(v []float64, q parse.Quantity) series.Summary {
	if col := pc.s.Values[q]; len(v) > 0 && len(col) == len(v) && &col[0] == &v[0] && pc.has(q) {
		return pc.sum[q]
	}
	return pc.summarize(v)
}

// lit is v with the dark samples set to NaN: v itself when no sample is dark.
func (d *derived) lit(v []float64) []float64 {
	if d.darkCount == 0 {
		return v
	}
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x
		if d.dark[i] {
			out[i] = math.NaN()
		}
	}
	return out
}

// summarize is series.Summarize with the port's scratch buffer.
func (pc *portCtx) summarize(v []float64) series.Summary {
	var s series.Summary
	s, pc.scratch = series.SummarizeInto(v, pc.scratch)
	return s
}

// transceiverSNRdB is the transceiver's own SNR ceiling SNR_trx. When the profile gives a
// back-to-back SNR it is used; otherwise it is derived from the implementation penalty Δ at the
// FEC threshold: the module needs SNR_th·10^(Δ/10) of line SNR to reach the theoretical SNR_th,
// so 1/SNR_th = 1/(SNR_th·10^(Δ/10)) + 1/SNR_trx, i.e. SNR_trx = SNR_th/(1 − 10^(−Δ/10)) (linear).
// With no penalty the ceiling is +Inf. This is a model of our own built on the additive-noise
// combination 1/SNR = Σ 1/SNR_i (common practice); it is conservative (low) for modules whose
// published required OSNR includes margin.
func transceiverSNRdB(p rules.Profile, snrThDB float64) (float64, string) {
	if p.BackToBackSNRdB > 0 {
		return p.BackToBackSNRdB, fmt.Sprintf("transceiver SNR ceiling %.1f dB from the profile", p.BackToBackSNRdB)
	}
	if !(p.ImplementationPenaltyDB > 0) {
		return math.Inf(1), "no transceiver SNR ceiling (the profile gives no implementation penalty)"
	}
	lin := optics.DBToLinear(snrThDB) / (1 - math.Pow(10, -p.ImplementationPenaltyDB/10))
	v := optics.LinearToDB(lin)
	return v, fmt.Sprintf("transceiver SNR ceiling %.1f dB derived from the %.2f dB implementation penalty", v, p.ImplementationPenaltyDB)
}

// expectedESNRdB is the eSNR (Es/N0, dB) the model expects from a line OSNR (dB, 0.1 nm):
// SNR_line = OSNR − 10·log10(p·Rs/(2·Bref)) (optics.SNRdBFromOSNRdB) combined with the
// transceiver ceiling, 1/SNR = 1/SNR_line + 1/SNR_trx.
func (pc *portCtx) expectedESNRdB(osnrDB float64) float64 {
	line := optics.SNRdBFromOSNRdB(osnrDB, pc.prof.BaudGBd, pc.prof.PolarizationCount())
	if math.IsInf(pc.snrTrxDB, 1) {
		return line
	}
	return optics.CombineSNRdB(line, pc.snrTrxDB)
}

// impliedOSNRdB inverts expectedESNRdB: the line OSNR that would leave eSNR esnrDB; +Inf when
// the eSNR is at or above the transceiver ceiling.
func (pc *portCtx) impliedOSNRdB(esnrDB float64) float64 {
	line := esnrDB
	if !math.IsInf(pc.snrTrxDB, 1) {
		inv := 1/optics.DBToLinear(esnrDB) - 1/optics.DBToLinear(pc.snrTrxDB)
		if inv <= 0 {
			return math.Inf(1)
		}
		line = -optics.LinearToDB(inv)
	}
	return optics.OSNRdBFromSNRdB(line, pc.prof.BaudGBd, pc.prof.PolarizationCount())
}

func medianInterval(ts []int64) int64 {
	if len(ts) < 2 {
		return 0
	}
	d := make([]int64, len(ts)-1)
	for i := 1; i < len(ts); i++ {
		d[i-1] = ts[i] - ts[i-1]
	}
	slices.Sort(d)
	return d[len(d)/2]
}

func nanSlice(n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = math.NaN()
	}
	return v
}

// summarizeColumns summarises every column the port has (and |x| of CD and LO offset), widened
// to the extremes of binned samples (widenWithBins).
func (pc *portCtx) summarizeColumns() {
	s, n := pc.s, pc.n
	for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
		if s.Has(q) {
			pc.cols |= 1 << q
			pc.sum[q] = pc.summarize(s.Values[q])
		}
	}
	for _, q := range [...]parse.Quantity{parse.CDpsPerNm, parse.LOOffsetMHz} {
		if pc.has(q) {
			// All finite values positive (or none): |x| is x itself, bit for bit, so the
			// summary of |x| is the one already made.
			if sq := pc.sum[q]; sq.N == 0 || sq.Min > 0 {
				pc.absSum[q] = sq
				continue
			}
			a := make([]float64, n)
			for i, v := range s.Values[q] {
				a[i] = math.Abs(v)
			}
			pc.absSum[q] = pc.summarize(a)
		}
	}
	widenWithBins(s.Bins, &pc.sum, &pc.absSum, pc.cols)
}

// derived is the value of the derive stage: per-sample BER, Q and eSNR from whichever the port
// reports (NaN where unknown), and its dark and lit samples. A measured column is shared with
// the series, not copied; no later stage writes it.
type derived struct {
	ber, qdb, esnr []float64
	berDerived     bool // ber computed from q_db
	qDerived       bool
	esnrDerived    bool
	dark           []bool // sample without usable light (power at the floor or no lock)
	darkCount      int
	litPower       []float64 // rx power on lit samples, NaN elsewhere
}

// derive fills BER, Q and eSNR per sample from whichever s reports (eSNR from BER needs a
// valid modulation), and marks as dark the samples with the received power at or below
// lossFloorDBm or a BER of no lock.
func derive(s *parse.Series, mod optics.Modulation, lossFloorDBm float64) derived {
	var d derived
	n := s.Len()
	hasBER, hasQ, hasESNR := s.Has(parse.PreFECBER), s.Has(parse.QdB), s.Has(parse.ESNRdB)
	switch {
	case hasBER:
		d.ber = s.Values[parse.PreFECBER]
	case hasQ:
		d.ber, d.berDerived = nanSlice(n), true
		for i, q := range s.Values[parse.QdB] {
			if !math.IsNaN(q) {
				d.ber[i] = optics.BERFromQdB(q)
			}
		}
	}
	switch {
	case hasQ:
		d.qdb = s.Values[parse.QdB]
	case hasBER:
		d.qdb, d.qDerived = nanSlice(n), true
		for i, b := range d.ber {
			if !math.IsNaN(b) {
				d.qdb[i] = qdBClamped(b)
			}
		}
	}
	switch {
	case hasESNR:
		d.esnr = s.Values[parse.ESNRdB]
	case d.ber != nil && mod.Valid():
		d.esnr, d.esnrDerived = nanSlice(n), true
		seen := make(map[float64]float64, 64) // this port's BER values already inverted
		for i, b := range d.ber {
			if b > 0 && b < noLockBER {
				v, ok := seen[b]
				if !ok {
					v = esnrOfBER(mod, b)
					seen[b] = v
				}
				d.esnr[i] = v
			}
		}
	}
	d.dark = make([]bool, n)
	d.litPower = nanSlice(n)
	pw := s.Values[parse.RxPowerDBm]
	for i := 0; i < n; i++ {
		dk := false
		if pw != nil && !math.IsNaN(pw[i]) && pw[i] <= lossFloorDBm {
			dk = true
		}
		if d.ber != nil && d.ber[i] >= noLockBER {
			dk = true
		}
		d.dark[i] = dk
		if dk {
			d.darkCount++
		} else if pw != nil {
			d.litPower[i] = pw[i]
		}
	}
	return d
}

// esnrMemo keeps the eSNR inverted from each pre-FEC BER value met (optics.SNRdBFromBER, a root
// search of some twenty BER evaluations, each a sum of erfc terms): exports write the BER to a
// few significant digits, so a fleet's millions of samples repeat a few thousand values (8,120
// over the 1,008,000 rows of samples/fleetgen's fleet). The same value and format give the same
// float64, so the memo changes no result.
var esnrMemo = memo[esnrKey, float64]{max: 1 << 16} // some 2 MB at most

type esnrKey struct {
	mod optics.Modulation
	ber uint64 // math.Float64bits
}

// esnrOfBER is optics.SNRdBFromBER(mod, ber), inverted once per value and format.
func esnrOfBER(mod optics.Modulation, ber float64) float64 {
	k := esnrKey{mod, math.Float64bits(ber)}
	if v, ok := esnrMemo.load(k); ok {
		return v
	}
	v := optics.SNRdBFromBER(mod, ber)
	esnrMemo.store(k, v)
	return v
}

// qdBClamped is Q in dB from BER, with BER 0 (no errors counted) mapped to the Q of BER 1e-15
// rather than +Inf, and BER 0.5 to Q → −Inf mapped to −20 dB, so summaries stay finite.
func qdBClamped(ber float64) float64 {
	switch {
	case ber <= berCountedZero:
		return optics.QdBFromBER(berCountedZero)
	case ber >= randomBER:
		return qFloorDB
	}
	q := optics.QdBFromBER(ber)
	return math.Max(q, qFloorDB)
}

// findings is the findings stage: the time-series findings of PortAnalysis (steps, bursts,
// runs without signal, SOP spikes and their coincidences, trends, the Maxwellian DGD fit),
// returned as a value from the series, the rules, the column summaries and the derive stage's
// value; it writes no field of pc (the summaries' scratch buffer aside). The rank correlations
// are the returned corrMemo's: all of them computed here, or with lazyCorr each on its first
// request (corrMemo.of); analyzePort puts the memo's list into the analysis at the end.
func (pc *portCtx) findings(lazyCorr bool) (PortAnalysis, *corrMemo) {
	var an PortAnalysis
	s, r := pc.s, pc.r
	minN := max(r.MinSamplesForTrend, minTrendSamples)

	// Change points in received power (lit samples only: a signal loss is its own cause).
	if pc.s.Has(parse.RxPowerDBm) && countFinite(pc.litPower) >= minN {
		for _, st := range series.ChangePoints(pc.litPower, series.ChangePointOptions{MinStep: r.PowerStepDB}) {
			an.PowerSteps = append(an.PowerSteps, ChangePoint{
				TimeMs: s.TimesMs[st.Index], Index: st.Index, Quantity: parse.RxPowerDBm.Column(),
				Before: st.Before, After: st.After, Step: st.Size(), Unit: "dB",
			})
		}
		tr := pc.trend(pc.litPower, parse.RxPowerDBm.Column(), "dBm", math.NaN())
		an.RxPowerTrend = tr
	}

	if pc.darkCount > 0 {
		d := make([]float64, pc.n)
		for i, x := range pc.dark {
			if x {
				d[i] = 1
			}
		}
		for _, run := range series.Runs(s.TimesMs, d, 0.5, 0) {
			an.DarkRuns = append(an.DarkRuns, toInterval(run))
		}
	}

	// Steps in the reported OSNR (loss before an amplifier: OSNR falls, power held).
	if so := pc.sum[parse.OSNRdB]; s.Has(parse.OSNRdB) && so.Max-so.Min >= r.OSNRStepDB && countFinite(s.Values[parse.OSNRdB]) >= minN {
		for _, st := range series.ChangePoints(s.Values[parse.OSNRdB], series.ChangePointOptions{MinStep: r.OSNRStepDB}) {
			an.OSNRSteps = append(an.OSNRSteps, ChangePoint{
				TimeMs: s.TimesMs[st.Index], Index: st.Index, Quantity: parse.OSNRdB.Column(),
				Before: st.Before, After: st.After, Step: st.Size(), Unit: "dB",
			})
		}
	}

	// BER bursts.
	if pc.ber != nil {
		med := pc.summaryOf(pc.lit(pc.ber), parse.PreFECBER).P50
		// A burst is BER_burst_factor × the median, or crossing the FEC threshold when the port
		// runs too close to it for a tenfold rise; never below the floor.
		thr := r.BERBurstFactor * med
		if fec := pc.prof.FECThresholdBER; fec > med && thr > fec {
			thr = fec
		}
		thr = math.Max(thr, burstFloorFraction*pc.prof.FECThresholdBER)
		if !math.IsNaN(thr) && thr > 0 {
			an.BurstThresholdBER = thr
			for _, run := range series.Runs(s.TimesMs, pc.lit(pc.ber), thr, 0) {
				an.BERBursts = append(an.BERBursts, toInterval(run))
			}
		}
	}
	if s.Has(parse.UncorrectedBlocks) {
		for _, run := range series.Runs(s.TimesMs, pc.lit(s.Values[parse.UncorrectedBlocks]), 0, 0) {
			an.BlockBursts = append(an.BlockBursts, toInterval(run))
		}
	}
	var spikes []series.Run
	if s.Has(parse.SOPRateKradPerS) && pc.prof.SOPTrackingKradS > 0 {
		med := pc.sum[parse.SOPRateKradPerS].P50
		thr := math.Max(r.SOPSpikeFraction*pc.prof.SOPTrackingKradS, sopSpikeOverMedian*med)
		an.SOPSpikeThresholdKradS = thr
		spikes = series.Runs(s.TimesMs, s.Values[parse.SOPRateKradPerS], thr, 0)
		for _, run := range spikes {
			an.SOPSpikes = append(an.SOPSpikes, toInterval(run))
		}
	}
	an.CoincidenceWindowS = math.Max(r.CoincidenceWindowS, coincidenceIntervals*float64(pc.intervalMs)/1000)
	if len(spikes) > 0 {
		win := int64(an.CoincidenceWindowS * 1000)
		for _, kind := range []struct {
			name   string
			bursts []Interval
		}{{parse.PreFECBER.Column(), an.BERBursts}, {parse.UncorrectedBlocks.Column(), an.BlockBursts}} {
			for _, p := range series.Coincide(toRuns(kind.bursts), spikes, win) {
				an.Coincidences = append(an.Coincidences, Coincidence{
					Kind: kind.name, Burst: toInterval(p.Burst), Spike: toInterval(p.Spike), LagS: float64(p.LagMs) / 1000,
				})
			}
		}
	}

	if s.Has(parse.LOOffsetMHz) && pc.prof.LOOffsetRangeMHz > 0 {
		// A step (retune, relock) is told from a drift: change points of at least
		// lo_step_fraction of the capture range are steps, and the trend is fitted after the
		// last one, so a step is never read as a drift.
		lo := s.Values[parse.LOOffsetMHz]
		minStep := r.LOStepFraction * pc.prof.LOOffsetRangeMHz
		if sl := pc.sum[parse.LOOffsetMHz]; sl.Max-sl.Min >= minStep && countFinite(lo) >= minN {
			for _, st := range series.ChangePoints(lo, series.ChangePointOptions{MinStep: minStep}) {
				an.LOSteps = append(an.LOSteps, ChangePoint{
					TimeMs: s.TimesMs[st.Index], Index: st.Index, Quantity: parse.LOOffsetMHz.Column(),
					Before: st.Before, After: st.After, Step: st.Size(), Unit: "MHz",
				})
			}
		}
		if k := len(an.LOSteps); k > 0 {
			after := nanSlice(pc.n)
			copy(after[an.LOSteps[k-1].Index:], lo[an.LOSteps[k-1].Index:])
			lo = after
		}
		an.LOTrend = pc.trend(lo, parse.LOOffsetMHz.Column(), "MHz", pc.prof.LOOffsetRangeMHz)
	}
	if s.Has(parse.DGDps) {
		v := pc.scratch[:0] // FitMaxwell copies what it keeps
		for _, x := range s.Values[parse.DGDps] {
			if !math.IsNaN(x) {
				v = append(v, x)
			}
		}
		pc.scratch = v
		if len(v) >= minN {
			f := optics.FitMaxwell(v)
			mf := &MaxwellFit{N: f.N, MeanPs: f.MeanPs, KS: f.KS, KSPValue: f.PValue,
				TolerancePs: pc.prof.DGDTolerancePs, ExceedProbability: math.NaN()}
			if pc.prof.DGDTolerancePs > 0 && f.MeanPs > 0 {
				mf.ExceedProbability = optics.MaxwellExceedProbability(pc.prof.DGDTolerancePs, f.MeanPs)
			}
			an.DGDFit = mf
		}
	}
	corr := &corrMemo{s: s, d: &pc.derived, minN: minN}
	if !lazyCorr {
		for _, q := range corrQuantities {
			corr.of(q)
		}
	}
	return an, corr
}

// corrQuantities are the quantities pre-FEC BER is rank-correlated with, in the order of
// PortAnalysis.Correlations when all are computed.
var corrQuantities = [...]parse.Quantity{parse.DGDps, parse.PDLdB, parse.RxPowerDBm, parse.SOPRateKradPerS}

// corrMemo holds the Spearman rank correlations of pre-FEC BER (lit samples) with the other
// quantities of one port (lit received power for rx power), each computed on its first request
// (of) and kept in list in the order asked. It belongs to the findings value; its inputs (the
// series and the derive stage's value) are read-only.
type corrMemo struct {
	s    *parse.Series
	d    *derived
	minN int // fewest usable pairs for a correlation

	done             uint32 // bit q: the correlation with q was computed (or cannot be)
	init             bool
	litBER           []float64
	berRanks, yRanks []float64
	list             []Correlation
}

// of is the correlation of pre-FEC BER with q, computed on the first request; nil when the port
// lacks BER or q, or has fewer than minN usable pairs. When BER has no gaps its ranks are
// computed once and reused; a q without gaps is then ranked alone, otherwise the pairs are
// ranked together (series.Spearman). The value of one correlation does not depend on which
// others were computed before it.
func (m *corrMemo) of(q parse.Quantity) *Correlation {
	if m.d.ber != nil && m.done&(1<<q) == 0 {
		m.done |= 1 << q
		m.compute(q)
	}
	for i := range m.list {
		if m.list[i].B == q.Column() {
			return &m.list[i]
		}
	}
	return nil
}

func (m *corrMemo) compute(q parse.Quantity) {
	s, n := m.s, m.s.Len()
	if !s.Has(q) {
		return
	}
	if !m.init {
		m.init = true
		m.litBER = m.d.lit(m.d.ber)
		// Rank BER once when it has no gaps; pair-wise ranking otherwise.
		if countFinite(m.litBER) == n {
			m.berRanks = series.Ranks(m.litBER)
		}
	}
	y := s.Values[q]
	if q == parse.RxPowerDBm {
		y = m.d.litPower
	}
	var rho, p float64
	var k int
	if m.berRanks != nil && countFinite(y) == n {
		m.yRanks = series.RanksInto(y, m.yRanks)
		rho, p = series.RankCorrelation(m.berRanks, m.yRanks)
		k = n
	} else {
		rho, k, p = series.Spearman(m.litBER, y)
	}
	if k >= m.minN && !math.IsNaN(rho) {
		m.list = append(m.list, Correlation{A: parse.PreFECBER.Column(), B: q.Column(), Rho: rho, N: k, P: p})
	}
}

// trend fits v over time; limit > 0 projects toward ±limit in the direction of the slope.
func (pc *portCtx) trend(v []float64, name, unit string, limit float64) *Trend {
	if countFinite(v) < max(pc.r.MinSamplesForTrend, minTrendSamples) {
		return nil
	}
	f := series.FitTrendPerHour(pc.s.TimesMs, v)
	if math.IsNaN(f.Slope) {
		return nil
	}
	start, end := pc.s.TimesMs[0], pc.s.TimesMs[pc.n-1]
	hours := float64(end-start) / 3.6e6
	t := &Trend{Quantity: name, Method: "ordinary least squares", Unit: unit,
		Slope: f.Slope, SlopeSE: f.SlopeSE, Intercept: f.Intercept, StartMs: start, EndMs: end,
		AtEnd: f.Intercept + f.Slope*hours, Limit: math.NaN(), HoursToLimit: math.Inf(1)}
	if limit > 0 {
		t.Limit = limit
		if f.Slope < 0 {
			t.Limit = -limit
		}
		if math.Abs(t.AtEnd) >= limit {
			t.HoursToLimit = 0
		} else {
			t.HoursToLimit = series.HoursToReach(t.AtEnd, f.Slope, t.Limit)
		}
	}
	return t
}

func countFinite(v []float64) int {
	n := 0
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			n++
		}
	}
	return n
}

func toInterval(r series.Run) Interval {
	return Interval{FromMs: r.FromMs, ToMs: r.ToMs, Peak: r.Peak, Samples: r.Samples}
}

func toRuns(iv []Interval) []series.Run {
	out := make([]series.Run, len(iv))
	for i, x := range iv {
		out[i] = series.Run{FromMs: x.FromMs, ToMs: x.ToMs, Peak: x.Peak, Samples: x.Samples}
	}
	return out
}
