package parse

import (
	"fmt"
	"math"
	"strings"
)

// colKind says what a header cell holds.
type colKind uint8

const (
	colUnknown colKind = iota
	colTime
	colPort
	colQuantity
	colBinLength // the length of a performance-monitoring bin (see bins.go)
	colProfile   // the module profile of the row's port (see profile.go)
)

// unitConv converts a value from the unit written in a column name to the stored unit.
type unitConv uint8

const (
	convNone         unitConv = iota
	convMilliwatt             // mW → dBm: 10·log10(P/1 mW)
	convMicrowatt             // µW → dBm: 10·log10(P/1 µW) − 30
	convTimes1000             // ns/nm → ps/nm, Mrad/s → krad/s, GHz → MHz
	convDiv1000               // fs → ps, rad/s → krad/s, kHz → MHz, GHz → THz
	convDiv1e6                // Hz → MHz, MHz → THz
	convLinearQ               // linear Q → dB: 20·log10 Q
	convWavelengthNm          // wavelength in nm → THz: f = c/λ
)

// column describes one header cell.
type column struct {
	kind colKind
	q    Quantity
	conv unitConv
}

// headerTable maps a normalised header name to its column; built once from the alias lists.
var headerTable = buildHeaderTable()

type unitAlt struct {
	suffixes []string
	conv     unitConv
}

func buildHeaderTable() map[string]column {
	t := map[string]column{}
	add := func(name string, c column) {
		if _, dup := t[name]; dup {
			panic("parse: header alias defined twice: " + name)
		}
		t[name] = c
	}
	// A performance-monitoring export stamps each bin with its start.
	for _, n := range []string{"time", "timestamp", "time_utc", "datetime", "date_time", "start_time", "interval_start", "bin_start", "period_start"} {
		add(n, column{kind: colTime})
	}
	for _, n := range []string{"port", "port_name", "port_id", "interface", "channel"} {
		add(n, column{kind: colPort})
	}
	for _, n := range []string{"profile", "profile_id", "module_profile", "module_type"} {
		add(n, column{kind: colProfile})
	}
	db := []unitAlt{{[]string{"db"}, convNone}}
	power := []unitAlt{{[]string{"dbm"}, convNone}, {[]string{"mw"}, convMilliwatt}, {[]string{"uw"}, convMicrowatt}}
	specs := []struct {
		q     Quantity
		names []string
		units []unitAlt
	}{
		{PreFECBER, []string{"pre_fec_ber", "prefec_ber", "ber_pre_fec"}, nil},
		{PostFECBER, []string{"post_fec_ber", "postfec_ber", "ber_post_fec"}, nil},
		{UncorrectedBlocks, []string{"uncorrected_blocks", "uncorrectable_blocks", "fec_uncorrectable_blocks"}, nil},
		{QdB, []string{"q_factor", "q_value"}, db},
		{ESNRdB, []string{"esnr"}, db},
		{OSNRdB, []string{"osnr"}, db},
		{CDpsPerNm, []string{"cd", "chromatic_dispersion"}, []unitAlt{
			{[]string{"ps_nm", "ps_per_nm"}, convNone}, {[]string{"ns_nm", "ns_per_nm"}, convTimes1000}}},
		{DGDps, []string{"dgd", "pmd", "polarization_mode_dispersion"}, []unitAlt{
			{[]string{"ps"}, convNone}, {[]string{"fs"}, convDiv1000}}},
		{PDLdB, []string{"pdl", "polarization_dependent_loss"}, db},
		{SOPRateKradPerS, []string{"sop_rate", "sop_roc"}, []unitAlt{
			{[]string{"krad_s", "krad_per_s", "krads"}, convNone},
			{[]string{"rad_s", "rad_per_s"}, convDiv1000},
			{[]string{"mrad_s", "mrad_per_s"}, convTimes1000}}},
		{LOOffsetMHz, []string{"lo_offset", "carrier_frequency_offset", "carrier_offset", "cfo"}, []unitAlt{
			{[]string{"mhz"}, convNone}, {[]string{"hz"}, convDiv1e6}, {[]string{"khz"}, convDiv1000},
			{[]string{"ghz"}, convTimes1000}}},
		{RxPowerDBm, []string{"rx_power", "input_power"}, power},
		{TxPowerDBm, []string{"tx_power", "output_power"}, power},
		{FrequencyTHz, []string{"frequency", "freq"}, []unitAlt{
			{[]string{"thz"}, convNone}, {[]string{"ghz"}, convDiv1000}, {[]string{"mhz"}, convDiv1e6}}},
	}
	for _, s := range specs {
		for _, n := range s.names {
			add(n, column{kind: colQuantity, q: s.q})
			for _, u := range s.units {
				for _, suf := range u.suffixes {
					add(n+"_"+suf, column{kind: colQuantity, q: s.q, conv: u.conv})
				}
			}
		}
	}
	add("q", column{kind: colQuantity, q: QdB, conv: convLinearQ})
	add("q_linear", column{kind: colQuantity, q: QdB, conv: convLinearQ})
	add("q_db", column{kind: colQuantity, q: QdB})
	add("wavelength_nm", column{kind: colQuantity, q: FrequencyTHz, conv: convWavelengthNm})
	return t
}

// normalizeHeader lower-cases name, reads µ/μ as u, and joins the pieces between separators
// (space, _ - . / [ ] ( ) { }) with single underscores: "Rx power [µW]" → "rx_power_uw".
func normalizeHeader(name string) string {
	var b strings.Builder
	b.Grow(len(name))
	pendingSep := false
	for _, r := range name {
		switch r {
		case ' ', '\t', '_', '-', '.', '/', '[', ']', '(', ')', '{', '}':
			pendingSep = b.Len() > 0
			continue
		case 'µ', 'μ':
			r = 'u'
		case '\ufeff':
			continue
		}
		if pendingSep {
			b.WriteByte('_')
			pendingSep = false
		}
		if r >= 'A' && r <= 'Z' {
			r += 'a' - 'A'
		}
		b.WriteRune(r)
	}
	return b.String()
}

// lookupColumn matches a header cell (or JSON field name) to a column.
func lookupColumn(name string) column {
	return headerTable[normalizeHeader(name)]
}

// speedOfLightMps is the speed of light in vacuum, c = 299 792 458 m/s (exact, SI definition).
const speedOfLightMps = 299792458.0

// convert applies c's unit conversion to v (in the unit of the column name) and returns the
// value in the stored unit. The conversions:
//
//	mW → dBm:  P_dBm = 10·log10(P_mW)                 (definition of dBm; P > 0)
//	µW → dBm:  P_dBm = 10·log10(P_µW) − 30            (1 µW = 1e-3 mW)
//	linear Q → dB: Q_dB = 20·log10 Q                  (Q > 0; common practice for Q-factor)
//	λ (nm) → f (THz): f = c/λ = 299 792.458/λ_nm      (c exact; λ > 0)
//	decimal prefixes: ×1000, ÷1000, ÷1e6 as named.
//
// ok is false when the value has no image in the stored unit (power ≤ 0 mW, Q ≤ 0, λ ≤ 0); the
// caller rejects the row then.
func (c column) convert(v float64) (out float64, ok bool) {
	switch c.conv {
	case convNone:
		return v, true
	case convMilliwatt:
		if !(v > 0) {
			return 0, false
		}
		return 10 * math.Log10(v), true
	case convMicrowatt:
		if !(v > 0) {
			return 0, false
		}
		return 10*math.Log10(v) - 30, true
	case convTimes1000:
		return v * 1000, true
	case convDiv1000:
		return v / 1000, true
	case convDiv1e6:
		return v / 1e6, true
	case convLinearQ:
		if !(v > 0) {
			return 0, false
		}
		return 20 * math.Log10(v), true
	case convWavelengthNm:
		if !(v > 0) {
			return 0, false
		}
		return speedOfLightMps / v / 1e3, true // m/s ÷ (λ_nm·1e-9 m) = Hz·1e9/λ_nm; ÷1e12 for THz
	}
	return v, true
}

// convFailure explains why convert refused v.
func (c column) convFailure(v float64) error {
	switch c.conv {
	case convMilliwatt, convMicrowatt:
		return fmt.Errorf("%w: power %g in linear units must be > 0 to have a dBm value", ErrImpossible, v)
	case convLinearQ:
		return fmt.Errorf("%w: linear Q %g must be > 0 to have a dB value", ErrImpossible, v)
	case convWavelengthNm:
		return fmt.Errorf("%w: wavelength %g nm must be > 0", ErrImpossible, v)
	}
	return ErrImpossible
}

// Bounds of physically possible values, in stored units. Values outside are rejected, never
// clamped. The CD, LO-offset and frequency bounds are our own sanity limits (common practice):
// wide enough for every real link.
const (
	maxPowerDBm     = 30.0     // 1 W: no single-channel telemetry reads higher
	maxAbsCDpsPerNm = 200000.0 // > 10 000 km of G.652 fibre at ~17 ps/(nm·km)
	maxAbsLOMHz     = 100000.0 // 100 GHz: beyond any channel width
	minFrequencyTHz = 150.0    // ~2000 nm
	maxFrequencyTHz = 250.0    // ~1200 nm
)

// checkRange returns nil when v (stored unit) is finite and physically possible for q, else the
// reason wrapping ErrImpossible. Range tests are written !(lo <= v && v <= hi) so NaN fails them.
// plainLo and plainHi bound, per quantity, values that checkRange surely accepts (finite and
// within the quantity's physical range), so the hot path can skip it for them; anything else
// is left to checkRange.
var plainLo, plainHi = func() (lo, hi [NumQuantities]float64) {
	for q := range lo {
		lo[q], hi[q] = -math.MaxFloat64, math.MaxFloat64
	}
	lo[PreFECBER], hi[PreFECBER] = 0, 0.5
	lo[PostFECBER], hi[PostFECBER] = 0, 0.5
	lo[UncorrectedBlocks], lo[DGDps], lo[PDLdB], lo[SOPRateKradPerS] = 0, 0, 0, 0
	lo[CDpsPerNm], hi[CDpsPerNm] = -maxAbsCDpsPerNm, maxAbsCDpsPerNm
	lo[LOOffsetMHz], hi[LOOffsetMHz] = -maxAbsLOMHz, maxAbsLOMHz
	hi[RxPowerDBm], hi[TxPowerDBm] = maxPowerDBm, maxPowerDBm
	lo[FrequencyTHz], hi[FrequencyTHz] = minFrequencyTHz, maxFrequencyTHz
	return lo, hi
}()

func checkRange(q Quantity, v float64) error {
	switch q {
	case PreFECBER, PostFECBER:
		if !(v >= 0 && v <= 0.5) {
			return fmt.Errorf("%w: BER %g outside 0…0.5", ErrImpossible, v)
		}
	case UncorrectedBlocks:
		if !(v >= 0) {
			return fmt.Errorf("%w: block count %g is negative", ErrImpossible, v)
		}
	case DGDps, PDLdB, SOPRateKradPerS:
		if !(v >= 0) {
			return fmt.Errorf("%w: %g %s is negative", ErrImpossible, v, q.Unit())
		}
	case CDpsPerNm:
		if !(math.Abs(v) <= maxAbsCDpsPerNm) {
			return fmt.Errorf("%w: |CD| %g ps/nm above %g ps/nm", ErrImpossible, v, maxAbsCDpsPerNm)
		}
	case LOOffsetMHz:
		if !(math.Abs(v) <= maxAbsLOMHz) {
			return fmt.Errorf("%w: |offset| %g MHz above %g MHz", ErrImpossible, v, maxAbsLOMHz)
		}
	case RxPowerDBm, TxPowerDBm:
		if !(v <= maxPowerDBm) {
			return fmt.Errorf("%w: power %+.2f dBm above %+g dBm", ErrImpossible, v, maxPowerDBm)
		}
	case FrequencyTHz:
		if !(v >= minFrequencyTHz && v <= maxFrequencyTHz) {
			return fmt.Errorf("%w: frequency %g THz outside %g…%g THz", ErrImpossible, v, minFrequencyTHz, maxFrequencyTHz)
		}
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return fmt.Errorf("%w: %g is not finite", ErrImpossible, v)
	}
	return nil
}
