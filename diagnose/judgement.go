package diagnose

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"
	"strings"

	"github.com/beatnote/beatnote/parse"
)

// decadesBelow is the margin of a bit error ratio to its limit on the logarithmic scale the
// ratio is judged on: log10(limit/measured) decades, positive when the measured ratio is below
// the limit. A measured 0 (no error counted) is taken as 1e-15, as for Q (common practice).
func decadesBelow(limit, measured float64) float64 {
	if !(limit > 0) || math.IsNaN(measured) {
		return math.NaN()
	}
	return math.Log10(limit / math.Max(measured, berCountedZero))
}

// pval prints a p-value for people: "p < 0.001" below a thousandth (the tiny values a long
// correlated series gives mean nothing more), else two significant digits.
func pval(p float64) string {
	if p < 0.001 {
		return "p < 0.001"
	}
	return fmt.Sprintf("p = %.2g", p)
}

// darkKinds splits the dark samples by what the physics says about them.
type darkKinds struct {
	noLight  []int   // no light arrived: power at the floor, or nothing decoded with the power dropped or unknown
	floor    int     // of noLight: power at or below the loss-of-signal floor
	dropped  int     // of noLight: nothing decoded, power above the floor but dropped
	noPower  int     // of noLight: nothing decoded, no power reading to tell
	decoded0 int     // of noLight: also pre-FEC BER ≥ noLockBER (nothing decoded)
	minPw    float64 // lowest power over noLight samples (dBm), +Inf when none
	lockLost []int   // nothing decoded while received power was normal: a loss of lock, not of light
}

// darkKinds classifies the dark samples. A sample is without light when its received power is
// at or below signal_loss_floor_dbm, or when nothing was decoded (pre-FEC BER ≥ 0.25) and the
// power either dropped (below the sensitivity limit, or power_step_db under the lit median) or
// was not reported. Nothing decoded with the power where it normally is, is a loss of lock: the
// light arrived and the receiver could not follow it (common practice: a loss-of-signal alarm
// is raised from the optical power, a loss of frame or lock from the decoded signal).
func (pc *portCtx) darkKinds() *darkKinds {
	if pc.cache.dark != nil {
		return pc.cache.dark
	}
	dk := &darkKinds{minPw: math.Inf(1)}
	pc.cache.dark = dk
	if pc.darkCount == 0 {
		return dk
	}
	pw := pc.s.Values[parse.RxPowerDBm]
	ref := math.NaN()
	if pw != nil {
		ref = pc.litPowerSummary().P50
	}
	p, r := pc.prof, pc.r
	for i, d := range pc.dark {
		if !d {
			continue
		}
		noDecode := pc.ber != nil && pc.ber[i] >= noLockBER
		switch {
		case pw != nil && !math.IsNaN(pw[i]) && pw[i] <= r.SignalLossFloorDBm:
			dk.floor++
		case pw == nil || math.IsNaN(pw[i]):
			dk.noPower++
		case (p.RxPowerMaxDBm > p.RxPowerMinDBm && pw[i] < p.RxPowerMinDBm) || (finite(ref) && pw[i] <= ref-r.PowerStepDB):
			dk.dropped++
		default:
			dk.lockLost = append(dk.lockLost, i)
			continue
		}
		dk.noLight = append(dk.noLight, i)
		if noDecode {
			dk.decoded0++
		}
		if pw != nil && !math.IsNaN(pw[i]) {
			dk.minPw = math.Min(dk.minPw, pw[i])
		}
	}
	return dk
}

// darkOwner is the cause owning the "samples without signal" criterion: signal-loss when light
// was really missing, none when the receiver only lost lock with light present (the impairment
// tests then name what was out of line at those samples).
func (pc *portCtx) darkOwner() CauseID {
	if len(pc.darkKinds().noLight) > 0 {
		return CauseSignalLoss
	}
	return ""
}

// powerEdgeOwner is the cause owning a received-power criterion. The criterion judges every
// sample; when its breach comes only from dark samples (the power floor of a signal loss), the
// lit power is inside the window and the breach belongs to signal-loss.
func (pc *portCtx) powerEdgeOwner(cause CauseID) CauseID {
	if pc.darkCount == 0 || cause != CauseRxPowerLow {
		return cause
	}
	lp := pc.litPowerSummary()
	if lp.N > 0 && lp.Min < pc.prof.RxPowerMinDBm+pc.r.RxPowerMarginalBandDB {
		return cause
	}
	return pc.darkOwner()
}

// lockLossOver finds the lock-loss samples (nothing decoded with normal power) at which the
// quantity q (by magnitude when abs) was beyond limit; it returns how many and the worst.
func (pc *portCtx) lockLossOver(q parse.Quantity, limit float64, abs bool) (n, worst int) {
	v := pc.s.Values[q]
	worst = -1
	if v == nil || !(limit > 0) {
		return 0, -1
	}
	for _, i := range pc.darkKinds().lockLost {
		x := v[i]
		if abs {
			x = math.Abs(x)
		}
		if x > limit {
			n++
			if worst < 0 || x > math.Abs(v[worst]) {
				worst = i
			}
		}
	}
	return n, worst
}

// lockLossText says when and how the receiver lost lock with light present, for evidence lines.
func (pc *portCtx) lockLossText(i, n int) string {
	more := ""
	if n > 1 {
		more = fmt.Sprintf(" (%d such samples; the worst shown)", n)
	}
	pw := pc.s.Values[parse.RxPowerDBm]
	return fmt.Sprintf("At %s the receiver lost lock (pre-FEC BER %.2g, nothing decoded) with the received power normal (%.1f dBm)%s",
		clock(pc.s.TimesMs[i]), pc.ber[i], pw[i], more)
}

// gapNotes reports telemetry gaps and rows without any reading. They are not evidence of a loss
// of light: a collector that misses polls leaves the same holes (common practice). A gap next
// to samples without light is returned as supporting evidence for signal-loss instead.
func (pc *portCtx) gapNotes(nj *notes) (nearDark string) {
	ts := pc.s.TimesMs
	empty := 0
	for i := 0; i < pc.n; i++ {
		all := true
		for q := parse.Quantity(0); q < parse.NumQuantities && all; q++ {
			all = nanAt(pc.s.Values[q], i)
		}
		if all {
			empty++
		}
	}
	if empty > 0 {
		nj.add("telemetry: %d of %d sample times carry no reading at all (missed polls); they are left out, and are not taken as a loss of light", empty, pc.n)
	}
	if pc.intervalMs <= 0 || pc.n < 3 {
		return ""
	}
	noLight := make(map[int]bool)
	for _, i := range pc.darkKinds().noLight {
		noLight[i] = true
	}
	var missing, darkMissing int64
	var worstFrom, worstTo, darkFrom, darkTo int64
	gaps := 0
	for i := 1; i < pc.n; i++ {
		d := ts[i] - ts[i-1]
		if d < gapFactor*pc.intervalMs {
			continue
		}
		if noLight[i-1] || noLight[i] {
			darkMissing += d - pc.intervalMs
			if d > darkTo-darkFrom {
				darkFrom, darkTo = ts[i-1], ts[i]
			}
			continue
		}
		gaps++
		missing += d - pc.intervalMs
		if d > worstTo-worstFrom {
			worstFrom, worstTo = ts[i-1], ts[i]
		}
	}
	span := ts[pc.n-1] - ts[0]
	if gaps > 0 {
		sides := "received power was normal on both sides, so they are taken as missed polls, not a loss of light"
		if !pc.has(parse.RxPowerDBm) {
			sides = "the log has no received power to tell a loss of light from missed polls; with light present on both sides they are taken as missed polls"
		}
		nj.add("telemetry gaps: %s of at least %d sample intervals, %s missing in all (%s of the log; the longest from %s to %s, usual interval %s); %s. The port is not judged inside the gaps",
			words.Plural(gaps, "gap", "gaps"), gapFactor, dur(missing), pct(float64(missing)/float64(span)), clock(worstFrom), clock(worstTo), dur(pc.intervalMs), sides)
	}
	if darkMissing > 0 {
		return fmt.Sprintf("Next to the samples without light the log also goes silent for %s (the longest silence from %s to %s).", dur(darkMissing), clock(darkFrom), clock(darkTo))
	}
	return ""
}

// criterionText is a criterion breach in words, as evidence for the cause that owns it.
func criterionText(c Criterion) string {
	mu := c.Unit
	if c.MarginUnit != "" {
		mu = c.MarginUnit
	}
	val := func(x float64, u string) string {
		if u == "" {
			return fmt.Sprintf("%.3g", x)
		}
		return fmt.Sprintf("%.4g %s", x, u)
	}
	return fmt.Sprintf("Criterion \"%s\" is %s: %s %s against a limit of %s (margin %s).",
		c.Name, strings.ToUpper(string(c.Verdict)), c.Statistic, val(c.Measured, c.Unit), val(c.Limit, c.Unit), val(c.Margin, mu))
}
