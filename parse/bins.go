package parse

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	dseries "github.com/beatnote/beatnote/diagnose/series"
)

// Performance-monitoring (PM) exports summarise each quantity over a bin — usually 15 minutes
// or 24 hours (the two PM intervals of ITU-T G.7710 and G.826-style error performance) — as its
// minimum, average and maximum. beatnote reads such a bin as one sample: the average is the
// value (Series.Values, as for a plain sample), and the bin's minimum and maximum are kept as
// its worst-case companions (Series.Bins), which the criteria judge. See docs/formats.md,
// "Performance-monitoring bins".

// binStat says which statistic of a bin a header cell holds.
type binStat uint8

const (
	statAvg  binStat = iota // a plain sample, or the bin average
	statLow                 // the lowest value in the bin
	statHigh                // the highest value in the bin
)

// statWords are the header pieces naming a bin statistic. "avg"/"mean"/"average" name the value.
var statWords = map[string]binStat{
	"min": statLow, "minimum": statLow, "low": statLow, "lowest": statLow,
	"max": statHigh, "maximum": statHigh, "high": statHigh, "highest": statHigh,
	"avg": statAvg, "mean": statAvg, "average": statAvg,
}

// binLengthNames are the header names of a bin-length column (with an optional unit piece:
// _s, _min, _h; a bare number is in seconds otherwise).
var binLengthNames = []string{"bin", "bin_length", "bin_len", "interval", "period", "granularity", "pm_interval", "bin_interval"}

// lookupHeaderCell matches a CSV header cell: a plain column (lookupColumn), a quantity with a
// bin statistic ("pre_fec_ber_max", "Q min [dB]", "avg rx power dBm"), or a bin-length column.
// unitS is the unit, in seconds, of a bare bin-length number.
func lookupHeaderCell(name string) (c column, st binStat, unitS float64) {
	if c = lookupColumn(name); c.kind != colUnknown {
		return c, statAvg, 0
	}
	norm := normalizeHeader(name)
	pieces := strings.Split(norm, "_")
	for i, p := range pieces {
		s, ok := statWords[p]
		if !ok {
			continue
		}
		rest := strings.Join(slices.Delete(slices.Clone(pieces), i, i+1), "_")
		if c = headerTable[rest]; c.kind == colQuantity {
			return c, s, 0
		}
	}
	for _, n := range binLengthNames {
		switch norm {
		case n, n + "_s", n + "_sec", n + "_seconds":
			return column{kind: colBinLength}, statAvg, 1
		case n + "_min", n + "_minutes":
			return column{kind: colBinLength}, statAvg, 60
		case n + "_h", n + "_hours":
			return column{kind: colBinLength}, statAvg, 3600
		}
	}
	return column{}, statAvg, 0
}

// worseHigh reports whether a higher value of q is the worse one (BER, DGD, PDL, SOP rate,
// blocks); lower is worse for Q, eSNR, OSNR and the powers. CD, LO offset and frequency are
// judged on their size either way; their maximum stands for the bin when no average is given.
func worseHigh(q Quantity) bool {
	switch q {
	case QdB, ESNRdB, OSNRdB, RxPowerDBm, TxPowerDBm:
		return false
	}
	return true
}

// maxBinMs is the longest bin read, 7 days: PM bins are 15 minutes or 24 hours; a longer
// "bin" is a misread column.
const maxBinMs = 7 * 86400000

// parseBinLength reads a bin length: a number with an optional unit — s, sec, m, min, h, hr,
// hour, d, day (any case, plural too, optionally after a space or dash: "15min", "15-MIN",
// "24 h", "1day", "900") — or HH:MM:SS. A bare number is in unitS seconds. The result is in
// milliseconds; ok is false for anything else or a length that is not positive or above 7 days.
func parseBinLength(b []byte, unitS float64) (ms int64, ok bool) {
	s := strings.ToLower(strings.TrimSpace(string(b)))
	if h, m, sec, n := 0, 0, 0, 0; len(s) == 8 && s[2] == ':' && s[5] == ':' {
		if n, _ = fmt.Sscanf(s, "%2d:%2d:%2d", &h, &m, &sec); n == 3 && m < 60 && sec < 60 {
			ms = int64(h*3600+m*60+sec) * 1000
			return ms, ms > 0 && ms <= maxBinMs
		}
		return 0, false
	}
	i := 0
	for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.') {
		i++
	}
	v, vok := parseFloat([]byte(s[:i]))
	unit := strings.TrimLeft(s[i:], " -")
	scale := unitS
	switch unit {
	case "":
	case "s", "sec", "secs", "second", "seconds":
		scale = 1
	case "m", "min", "mins", "minute", "minutes":
		scale = 60
	case "h", "hr", "hrs", "hour", "hours":
		scale = 3600
	case "d", "day", "days":
		scale = 86400
	default:
		return 0, false
	}
	ms = int64(math.Round(v * scale * 1000))
	return ms, vok && ms > 0 && ms <= maxBinMs
}

// binLayout is what a header says about bins: the companion columns and the bin length.
type binLayout struct {
	lowFields, highFields []int      // field index of each min / max column
	lowQs, highQs         []Quantity // their quantities
	lengthCol             int        // field of the bin length, -1 when none
	lengthUnitS           float64    // unit of a bare number in it
}

func (b *binLayout) any() bool { return b != nil && (len(b.lowQs) > 0 || len(b.highQs) > 0) }

// valueFallbacks gives a value column to each quantity that has a bin minimum or maximum but
// no average (nor plain) column: the extreme on its worse side when given (the maximum of BER,
// the minimum of Q), else the other one. It returns a note for each.
func (b *binLayout) valueFallbacks(lay *csvLayout) (notes []string) {
	field := func(qs []Quantity, fields []int, q Quantity) int {
		if i := slices.Index(qs, q); i >= 0 {
			return fields[i]
		}
		return -1
	}
	for q := Quantity(0); q < NumQuantities; q++ {
		lo, hi := field(b.lowQs, b.lowFields, q), field(b.highQs, b.highFields, q)
		if lay.qmask&(1<<q) != 0 || lo < 0 && hi < 0 {
			continue
		}
		f, which := hi, "maximum"
		if hi < 0 || lo >= 0 && !worseHigh(q) {
			f, which = lo, "minimum"
		}
		lay.qFields = append(lay.qFields, f)
		lay.qs = append(lay.qs, q)
		lay.qmask |= 1 << q
		notes = append(notes, fmt.Sprintf("%s has no average column: each bin's %s (column %d %q) is read as its value", q, which, f+1, lay.names[f]))
	}
	return notes
}

// binRows are the companions of a file's accepted rows, in arrival order: for row i,
// low[i*len(lowQs)+j] is the bin minimum of lowQs[j], high likewise, lengthMs[i] the bin length
// (0: not given).
type binRows struct {
	lay      *binLayout
	ports    []string
	times    []int64
	lengthMs []int64
	low      []float64
	high     []float64
}

// addJob appends the companions of a parsed CSV job's accepted rows (called in input order).
func (br *binRows) addJob(job *csvJob) {
	for _, pi := range job.rowPort {
		br.ports = append(br.ports, job.names[pi])
	}
	br.times = append(br.times, job.times...)
	br.lengthMs = append(br.lengthMs, job.binLen...)
	br.low = append(br.low, job.binLow...)
	br.high = append(br.high, job.binHigh...)
}

// attachBins gives the series their bin companions from the inputs' binRows (in input order):
// per port, the rows sorted by time with the last of equal times winning, as for the values,
// then matched to the series' times. A binned input without a bin-length column gets the
// port's median sample spacing as its bin length.
func attachBins(series []*Series, files []*binRows) {
	type row struct {
		t, length int64
		f, i      int
	}
	perPort := map[string][]row{}
	for f, br := range files {
		if br == nil {
			continue
		}
		for i, p := range br.ports {
			perPort[p] = append(perPort[p], row{br.times[i], br.lengthMs[i], f, i})
		}
	}
	if len(perPort) == 0 {
		return
	}
	for _, s := range series {
		rows := perPort[s.Port]
		if len(rows) == 0 {
			continue
		}
		sort.SliceStable(rows, func(a, b int) bool { return rows[a].t < rows[b].t })
		n := s.Len()
		bins := &Bins{LengthMs: make([]int64, n)}
		col := func(c *[NumQuantities][]float64, q Quantity) []float64 {
			if c[q] == nil {
				c[q] = make([]float64, n)
				for i := range c[q] {
					c[q][i] = math.NaN()
				}
			}
			return c[q]
		}
		times := s.Decoded().TimesMs
		inferred := dseries.MedianStepMs(times)
		if inferred > maxBinMs {
			inferred = 0 // no bin is that long: unknown
		}
		k, attached := 0, false
		for j, r := range rows {
			if j+1 < len(rows) && rows[j+1].t == r.t {
				continue // a later row of the same time wins
			}
			for k < n && times[k] < r.t {
				k++
			}
			if k == n || times[k] != r.t {
				continue
			}
			br := files[r.f]
			if r.length == 0 && !br.hasCompanion(r.i) {
				continue // nothing of a bin given: a plain sample
			}
			attached = true
			bins.LengthMs[k] = r.length
			if r.length == 0 {
				bins.LengthMs[k] = inferred
			}
			nl, nh := len(br.lay.lowQs), len(br.lay.highQs)
			for x, q := range br.lay.lowQs {
				col(&bins.Low, q)[k] = br.low[r.i*nl+x]
			}
			for x, q := range br.lay.highQs {
				col(&bins.High, q)[k] = br.high[r.i*nh+x]
			}
		}
		if attached {
			s.Bins = bins
		}
	}
}

// hasCompanion reports whether row i gives some bin minimum or maximum.
func (br *binRows) hasCompanion(i int) bool {
	nl, nh := len(br.lay.lowQs), len(br.lay.highQs)
	for _, v := range br.low[i*nl : (i+1)*nl] {
		if !math.IsNaN(v) {
			return true
		}
	}
	for _, v := range br.high[i*nh : (i+1)*nh] {
		if !math.IsNaN(v) {
			return true
		}
	}
	return false
}
