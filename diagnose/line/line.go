// Package line reasons across the channels that share a fibre line: when several of them
// change together — light lost, OSNR down with the power held, power down, fast polarization
// changes — inside the coincidence window, that is one event of the line, not N unrelated port
// causes. It also pools the channels' DGD samples into the fibre's mean DGD.
//
// The input is a summary of each port taken from its judgement by package diagnose while its
// series is at hand (NewChannel: the port's line from the port map, its onsets of each kind and
// its DGD samples), so that neither the result nor the series need be kept; the output is
// diagnose.LineResult and a pointer from each affected port to the finding (Refs).
//
// # How sure: the chance of a coincidence
//
// For each kind of change, channel c shows n_c onsets over its log of duration T_c, a rate
// λ_c = n_c/T_c (counting the event under test too, which overstates the chance rate and so
// understates the confidence). The probability that channel c shows an onset inside a given
// window of width W by chance is p_c = 1 − exp(−λ_c·W) (Poisson arrivals). The number X of the
// line's N channels that do so independently follows the Poisson binomial distribution of the
// p_c (Y. H. Wang, "On the number of successes in independent trials", Statistica Sinica 3,
// 1993), computed exactly by the recursion P_j(x) = P_{j−1}(x)·(1 − p_j) + P_{j−1}(x−1)·p_j.
// Looking for such a cluster anywhere in the log tries about M = T/W windows; the Bonferroni
// bound of the scan statistic (J. Glaz, J. Naus, S. Wallenstein, Scan Statistics, Springer
// 2001, ch. 2) gives P(some window holds ≥ k by chance) ≤ M·P(X ≥ k). The finding's confidence
// is 1 − min(1, M·P(X ≥ k)): the probability, under that bound, that the channels did not change
// together by chance. A finding needs k ≥ 2 channels and a confidence of at least the rules'
// line_finding_min_confidence.
package line

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"
	"slices"
	"sort"
	"strings"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// explains maps each line finding to the port cause it stands for on the affected ports.
var explains = map[diagnose.LineFindingID]diagnose.CauseID{
	diagnose.LineOutage:       diagnose.CauseSignalLoss,
	diagnose.LineOSNRDrop:     diagnose.CauseOSNRLow,
	diagnose.LinePowerDrop:    diagnose.CauseRxPowerLow,
	diagnose.LineSOPTransient: diagnose.CauseSOPTransient,
}

// onset is one change on one channel.
type onset struct {
	ch       int     // index into the line's channels
	ms, end  int64   // start and end of the change (end = start for a step)
	size     float64 // step size (dB) or peak SOP rate (krad/s); dark minutes for an outage
	heldDB   float64 // for an OSNR step: the received-power change across it (dB)
	hasHeld  bool
	osnrMove float64 // for a power step: the OSNR change across it (dB)
	hasOSNR  bool
}

// Channel is what the line reasoning needs of one port on a line, taken while the port's series
// is at hand (NewChannel) so that the series need not be kept: its span and sample interval, its
// onsets of every kind, and its DGD samples for the pooled mean.
type Channel struct {
	Port, Line string
	firstMs    int64
	lastMs     int64
	spanMs     int64
	stepMs     int64
	onsets     map[diagnose.LineFindingID][]onset
	osnrHave   bool
	// DGD holds the port's DGD samples that are not negative (nor NaN), in time order; the
	// caller may move them elsewhere and give them back through ReasonChannels' dgd.
	DGD []float64
	// tolerancePs is the DGD tolerance of the port's profile (0: none stated).
	tolerancePs float64
}

// OnLine reports whether the line reasoning takes p: a port with a line and an analysed,
// non-empty series.
func OnLine(p *diagnose.PortResult) bool {
	return p.Line != "" && p.Analysis != nil && p.Analysis.Series != nil && p.Analysis.Series.Len() > 0
}

// Reason groups res.Ports by their Line, finds each line's events and its pooled mean DGD,
// sets res.Lines (lines by name) and points every affected port at its findings. Ports without
// a line, or without an Analysis, are left alone. r gives the thresholds.
func Reason(res *diagnose.Result, r rules.Rules) {
	var chans []*Channel
	byPort := map[string]*diagnose.PortResult{}
	for i := range res.Ports {
		p := &res.Ports[i]
		if OnLine(p) {
			chans = append(chans, NewChannel(p, r))
			byPort[p.Port] = p
		}
	}
	res.Lines, _ = ReasonChannels(chans, r, nil) // without dgd there is no error
	for port, refs := range Refs(res.Lines) {
		if p := byPort[port]; p != nil {
			p.LineFindings = append(p.LineFindings, refs...)
		}
	}
}

// ReasonChannels groups the channels by their Line and finds each line's events and its pooled
// mean DGD: the lines by name. dgd, when set, gives a channel's DGD samples (those its DGD held
// when taken; its error is returned); nil reads Channel.DGD. The samples are asked for one line
// at a time.
func ReasonChannels(chans []*Channel, r rules.Rules, dgd func(c *Channel) ([]float64, error)) ([]diagnose.LineResult, error) {
	byLine := map[string][]*Channel{}
	for _, c := range chans {
		byLine[c.Line] = append(byLine[c.Line], c)
	}
	names := make([]string, 0, len(byLine))
	for n := range byLine {
		names = append(names, n)
	}
	sort.Strings(names)
	var out []diagnose.LineResult
	for _, n := range names {
		cs := byLine[n]
		sort.Slice(cs, func(i, j int) bool { return cs[i].Port < cs[j].Port })
		lr, err := analyzeLine(n, cs, r, dgd)
		if err != nil {
			return nil, err
		}
		out = append(out, lr)
	}
	return out, nil
}

// Refs gives, for every port a line finding affects, its pointers to the findings: by line, then
// in the line's order of findings.
func Refs(lines []diagnose.LineResult) map[string][]diagnose.LineRef {
	out := map[string][]diagnose.LineRef{}
	for _, lr := range lines {
		for _, f := range lr.Findings {
			for _, port := range f.PortsAffected {
				out[port] = append(out[port], diagnose.LineRef{Line: lr.Line, ID: f.ID, From: f.From, Explains: f.Explains})
			}
		}
	}
	return out
}

// analyzeLine finds the events of one line.
func analyzeLine(name string, chans []*Channel, r rules.Rules, dgd func(c *Channel) ([]float64, error)) (diagnose.LineResult, error) {
	lr := diagnose.LineResult{Line: name, Findings: []diagnose.LineFinding{}}
	var fromMs, toMs int64 = math.MaxInt64, math.MinInt64
	var steps []int64
	for _, c := range chans {
		lr.Ports = append(lr.Ports, c.Port)
		fromMs, toMs = min(fromMs, c.firstMs), max(toMs, c.lastMs)
		steps = append(steps, c.stepMs)
	}
	slices.Sort(steps)
	// Change points are placed to about one sample: the window is at least two intervals.
	windowMs := max(int64(r.CoincidenceWindowS*1000), 2*steps[len(steps)/2])
	spanMs := max(toMs-fromMs, windowMs)
	for _, id := range []diagnose.LineFindingID{diagnose.LineOutage, diagnose.LineOSNRDrop, diagnose.LinePowerDrop, diagnose.LineSOPTransient} {
		var clusters []cluster
		for _, cl := range clusterOnsets(chans, id, windowMs) {
			cl.chance = chance(chans, id, cl.k(), windowMs, spanMs)
			if cl.k() >= 2 && 1-cl.chance >= r.LineFindingMinConfidence {
				clusters = append(clusters, cl)
			}
		}
		if len(clusters) == 0 {
			continue
		}
		if id == diagnose.LineSOPTransient {
			// Bursts of fast polarization change come in series (wind gusts, a storm): one finding.
			lr.Findings = append(lr.Findings, finding(id, chans, clusters, windowMs, spanMs, toMs))
			continue
		}
		for _, cl := range clusters {
			lr.Findings = append(lr.Findings, finding(id, chans, []cluster{cl}, windowMs, spanMs, toMs))
		}
	}
	sort.SliceStable(lr.Findings, func(i, j int) bool { return lr.Findings[i].From < lr.Findings[j].From })
	pmd, err := pooledPMD(chans, dgd)
	lr.PMD = pmd
	return lr, err
}

// NewChannel takes what the line reasoning needs of port p (OnLine(p) must hold): its onsets of
// every kind, from its analysis and its series, and its DGD samples.
func NewChannel(p *diagnose.PortResult, r rules.Rules) *Channel {
	an := p.Analysis
	s := an.Series.Decoded()
	c := &Channel{Port: p.Port, Line: p.Line, firstMs: s.TimesMs[0], lastMs: s.TimesMs[s.Len()-1],
		spanMs: max(s.TimesMs[s.Len()-1]-s.TimesMs[0], 1), stepMs: max(series.MedianStepMs(s.TimesMs), 1),
		onsets: map[diagnose.LineFindingID][]onset{}, tolerancePs: an.Profile.DGDTolerancePs}
	for _, x := range s.Values[parse.DGDps] {
		if x >= 0 { // NaN fails
			c.DGD = append(c.DGD, x)
		}
	}
	for _, d := range an.DarkRuns {
		c.onsets[diagnose.LineOutage] = append(c.onsets[diagnose.LineOutage], onset{ms: d.FromMs, end: d.ToMs, size: float64(d.Samples)})
	}
	pw, osnr := s.Values[parse.RxPowerDBm], s.Values[parse.OSNRdB]
	// across is the change of v's mean from the w samples before index i to the w from it on.
	across := func(v []float64, i int) (float64, bool) {
		const w = 10
		before, after := finiteMean(v[max(0, i-w):i]), finiteMean(v[i:min(len(v), i+w)])
		return after - before, !math.IsNaN(before) && !math.IsNaN(after)
	}
	if s.Has(parse.OSNRdB) && len(osnr) >= max(r.MinSamplesForTrend, 3) {
		c.osnrHave = true
		for _, st := range series.ChangePoints(osnr, series.ChangePointOptions{MinStep: r.OSNRStepDB}) {
			if st.Size() > -r.OSNRStepDB {
				continue
			}
			o := onset{ms: s.TimesMs[st.Index], end: s.TimesMs[st.Index], size: st.Size()}
			if pw != nil {
				o.heldDB, o.hasHeld = across(pw, st.Index)
			}
			c.onsets[diagnose.LineOSNRDrop] = append(c.onsets[diagnose.LineOSNRDrop], o)
		}
	}
	for _, st := range an.PowerSteps {
		if st.Step > -r.PowerStepDB {
			continue
		}
		o := onset{ms: st.TimeMs, end: st.TimeMs, size: st.Step}
		if osnr != nil {
			o.osnrMove, o.hasOSNR = across(osnr, st.Index)
		}
		c.onsets[diagnose.LinePowerDrop] = append(c.onsets[diagnose.LinePowerDrop], o)
	}
	for _, sp := range an.SOPSpikes {
		c.onsets[diagnose.LineSOPTransient] = append(c.onsets[diagnose.LineSOPTransient], onset{ms: sp.FromMs, end: sp.ToMs, size: sp.Peak})
	}
	// An OSNR step with the power falling as much is a loss the receivers see: a power drop.
	kept := c.onsets[diagnose.LineOSNRDrop][:0]
	for _, o := range c.onsets[diagnose.LineOSNRDrop] {
		if o.hasHeld && o.heldDB <= -r.PowerStepDB {
			continue
		}
		kept = append(kept, o)
	}
	c.onsets[diagnose.LineOSNRDrop] = kept
	return c
}

// cluster is a set of onsets of one kind, at most one per channel, inside one window.
type cluster struct {
	members []onset
	chance  float64
}

func (c cluster) k() int { return len(c.members) }

// clusterOnsets groups the onsets of kind id: each cluster starts at the earliest onset not
// yet grouped and takes, per channel, the first onset within windowMs of it.
func clusterOnsets(chans []*Channel, id diagnose.LineFindingID, windowMs int64) []cluster {
	var all []onset
	for i, c := range chans {
		for _, o := range c.onsets[id] {
			o.ch = i
			all = append(all, o)
		}
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].ms < all[j].ms })
	var out []cluster
	used := make([]bool, len(all))
	for i := range all {
		if used[i] {
			continue
		}
		cl := cluster{}
		seen := map[int]bool{}
		for j := i; j < len(all) && all[j].ms-all[i].ms <= windowMs; j++ {
			if used[j] || seen[all[j].ch] {
				continue
			}
			used[j], seen[all[j].ch] = true, true
			cl.members = append(cl.members, all[j])
		}
		out = append(out, cl)
	}
	return out
}

// chance is the Bonferroni-bounded probability that k or more of the line's channels (those
// that report the quantity) show an onset of kind id inside some window of windowMs by
// chance, each at its own rate (see the package comment).
func chance(chans []*Channel, id diagnose.LineFindingID, k int, windowMs, spanMs int64) float64 {
	var p []float64
	for _, c := range chans {
		if id == diagnose.LineOSNRDrop && !c.osnrHave {
			continue
		}
		rate := float64(len(c.onsets[id])) / float64(c.spanMs) // per ms
		p = append(p, -math.Expm1(-rate*float64(windowMs)))
	}
	windows := math.Max(1, float64(spanMs)/float64(windowMs))
	return math.Min(1, windows*PoissonBinomialTail(p, k))
}

// PoissonBinomialTail is P(X ≥ k) for X the number of successes in independent trials with
// success probabilities p (the Poisson binomial distribution; Y. H. Wang, Statistica Sinica 3,
// 1993), by the exact recursion over trials. k ≤ 0 gives 1; k > len(p) gives 0.
func PoissonBinomialTail(p []float64, k int) float64 {
	if k <= 0 {
		return 1
	}
	if k > len(p) {
		return 0
	}
	dist := make([]float64, len(p)+1) // dist[x] = P(x successes so far)
	dist[0] = 1
	for j, pj := range p {
		for x := j + 1; x >= 1; x-- {
			dist[x] = dist[x]*(1-pj) + dist[x-1]*pj
		}
		dist[0] *= 1 - pj
	}
	tail := 0.0
	for x := k; x <= len(p); x++ {
		tail += dist[x]
	}
	return math.Min(1, tail)
}

// finding turns the clusters of one kind into a line finding with its evidence.
func finding(id diagnose.LineFindingID, chans []*Channel, clusters []cluster, windowMs, spanMs, endMs int64) diagnose.LineFinding {
	f := diagnose.LineFinding{ID: id, Explains: explains[id]}
	affected := map[string]bool{}
	best := 1.0
	var fromMs, toMs int64 = math.MaxInt64, math.MinInt64
	for _, cl := range clusters {
		best = math.Min(best, cl.chance)
		for _, o := range cl.members {
			affected[chans[o.ch].Port] = true
			fromMs, toMs = min(fromMs, o.ms), max(toMs, o.end)
		}
	}
	if id == diagnose.LineOSNRDrop || id == diagnose.LinePowerDrop {
		toMs = endMs // a step lasts until the log ends (a later step back up is its own change)
	}
	f.Confidence = 1 - best
	f.From, f.To = rfc3339(fromMs), rfc3339(toMs)
	for p := range affected {
		f.PortsAffected = append(f.PortsAffected, p)
	}
	sort.Strings(f.PortsAffected)
	n := len(chans)
	win := fmt.Sprintf("%g s", float64(windowMs)/1000)
	if windowMs%60000 == 0 {
		win = fmt.Sprintf("%d min", windowMs/60000)
	}
	chanceText := func(cl cluster) string {
		return fmt.Sprintf("the chance of %d of %d channels doing so in one %s window by coincidence, at each channel's own rate of such changes, anywhere in the %.1f h log, is at most %.2g (Poisson binomial with a Bonferroni scan bound)",
			cl.k(), n, win, float64(spanMs)/3.6e6, cl.chance)
	}
	cl := clusters[0]
	for _, c := range clusters[1:] {
		if c.chance < cl.chance {
			cl = c // the clearest: the least likely by chance
		}
	}
	sizes := func() (med, lo, hi float64) {
		var v []float64
		for _, o := range cl.members {
			v = append(v, o.size)
		}
		slices.Sort(v)
		return v[len(v)/2], v[0], v[len(v)-1]
	}
	at := clock(cl.members[0].ms)
	switch id {
	case diagnose.LineOutage:
		var back int64
		for _, o := range cl.members {
			back = max(back, o.end)
		}
		f.Evidence = append(f.Evidence,
			fmt.Sprintf("Light lost on %d of %d channels of the line within %s from %s, back by %s: one loss of the line (a cut, a pulled patch on the line side, an amplifier down), not %d separate faults; %s.",
				cl.k(), n, win, at, clock(back), cl.k(), chanceText(cl)))
	case diagnose.LineOSNRDrop:
		med, lo, hi := sizes()
		held := 0.0
		for _, o := range cl.members {
			if o.hasHeld && math.Abs(o.heldDB) > math.Abs(held) {
				held = o.heldDB
			}
		}
		f.Evidence = append(f.Evidence,
			fmt.Sprintf("OSNR fell on %d of %d channels within %s at %s, by %.1f dB (median; %.1f to %.1f dB), while the received power held (largest change %+.1f dB); %s.",
				cl.k(), n, win, at, -med, -hi, -lo, held, chanceText(cl)),
			"Loss rising before an amplifier that holds its output (a bend, a crushed duct, a failing splice) or an amplifier adding more noise changes the OSNR of every channel and not their power: look at the line's spans and amplifiers, not at the transceivers.")
	case diagnose.LinePowerDrop:
		med, lo, hi := sizes()
		moved := 0.0
		for _, o := range cl.members {
			if o.hasOSNR && math.Abs(o.osnrMove) > math.Abs(moved) {
				moved = o.osnrMove
			}
		}
		f.Evidence = append(f.Evidence,
			fmt.Sprintf("Received power fell on %d of %d channels within %s at %s, by %.1f dB (median; %.1f to %.1f dB), the OSNR changing at most %+.1f dB; %s.",
				cl.k(), n, win, at, -med, -hi, -lo, moved, chanceText(cl)),
			"A loss after the last amplifier (the preamplifier's output, the demultiplexer, receive-side patching shared by the channels) lowers every channel's power and leaves the OSNR: look there, not at each transceiver.")
	case diagnose.LineSOPTransient:
		var times []string
		peak := 0.0
		for _, c := range clusters {
			times = append(times, fmt.Sprintf("%s (%d of %d channels)", clock(c.members[0].ms), c.k(), n))
			for _, o := range c.members {
				peak = math.Max(peak, o.size)
			}
		}
		f.Evidence = append(f.Evidence,
			fmt.Sprintf("The SOP rate spiked on several channels in the same window %s, up to %.0f krad/s: %s; for the clearest, %s.",
				words.Plural(len(clusters), "time", "times"), peak, strings.Join(times, ", "), chanceText(cl)),
			"Polarization transients that every channel sees at once come from the fibre itself — an aerial section in wind or near lightning, a cable being handled — not from the transceivers.")
	}
	return f
}

// pooledPMD is the fibre's mean DGD from every DGD sample of every channel (the average over
// time and wavelength of ITU-T G.650.2), and the Maxwellian tail at the smallest tolerance.
// dgd, when set, gives each channel's samples (else Channel.DGD).
func pooledPMD(chans []*Channel, dgd func(c *Channel) ([]float64, error)) (*diagnose.LinePMD, error) {
	var all []float64
	out := &diagnose.LinePMD{ChannelMeanMinPs: math.Inf(1), ChannelMeanMaxPs: math.Inf(-1), TolerancePs: math.Inf(1)}
	for _, c := range chans {
		v := c.DGD
		if dgd != nil {
			var err error
			if v, err = dgd(c); err != nil {
				return nil, err
			}
		}
		if len(v) == 0 {
			continue
		}
		m := optics.MeanDGDFromSamples(v)
		out.Channels++
		out.ChannelMeanMinPs, out.ChannelMeanMaxPs = math.Min(out.ChannelMeanMinPs, m), math.Max(out.ChannelMeanMaxPs, m)
		if tol := c.tolerancePs; tol > 0 {
			out.TolerancePs = math.Min(out.TolerancePs, tol)
		}
		all = append(all, v...)
	}
	if out.Channels == 0 {
		return nil, nil
	}
	out.Samples = len(all)
	out.MeanDGDPs = optics.MeanDGDFromSamples(all)
	if math.IsInf(out.TolerancePs, 1) {
		out.TolerancePs = 0 // no profile states one: no tail probability either
	} else {
		out.ExceedProbability = optics.MaxwellExceedProbability(out.TolerancePs, out.MeanDGDPs)
	}
	return out, nil
}

func finiteMean(v []float64) float64 {
	s, n := 0.0, 0
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			s += x
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}

func rfc3339(ms int64) string { return time.UnixMilli(ms).UTC().Format(time.RFC3339) }

func clock(ms int64) string { return time.UnixMilli(ms).UTC().Format("2006-01-02 15:04 UTC") }
