package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/alecthomas/kong"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
)

// number is a float flag value that may be negative: "--dbm -3" reads -3 instead of taking "-3"
// for a short flag (powers in dBm, CD and eSNR are often negative).
type number float64

// Decode reads the next token as a number, whatever its sign.
func (n *number) Decode(ctx *kong.DecodeContext) error {
	t := ctx.Scan.Pop()
	if t.IsEOL() {
		return fmt.Errorf("--%s needs a number", ctx.Value.Name)
	}
	s := strings.TrimSpace(fmt.Sprint(t.Value))
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return fmt.Errorf("--%s: %q is not a number", ctx.Value.Name, s)
	}
	*n = number(v)
	return nil
}

// CalcCmd is the field calculator: the physics models of diagnose/optics, one topic per
// subcommand, text by default and one flat JSON object with --format json.
type CalcCmd struct {
	Q      CalcQCmd      `cmd:"" help:"Convert between pre-FEC BER and Q-factor."`
	BER    CalcBERCmd    `cmd:"" name:"ber" help:"Pre-FEC BER from Q-factor, or from eSNR for a modulation."`
	OSNR   CalcOSNRCmd   `cmd:"" name:"osnr" help:"eSNR and OSNR (0.1 nm) needed for a BER, or the BER an OSNR gives."`
	Length CalcLengthCmd `cmd:"" help:"Fibre length implied by a measured chromatic dispersion."`
	CD     CalcCDCmd     `cmd:"" name:"cd" help:"Chromatic dispersion expected from a fibre length."`
	DGD    CalcDGDCmd    `cmd:"" name:"dgd" help:"Probability that the instantaneous DGD exceeds a limit (Maxwellian)."`
	Power  CalcPowerCmd  `cmd:"" help:"Convert optical power between dBm and mW."`
	Grid   CalcGridCmd   `cmd:"" help:"Frequency and wavelength on the ITU-T G.694.1 DWDM grid."`
	ASE    CalcASECmd    `cmd:"" name:"ase" help:"OSNR left by a chain of identical optical amplifiers."`
}

// Help explains the output.
func (c *CalcCmd) Help() string {
	return `Each topic prints its inputs and results, one per line with units. With --format json it prints
one flat JSON object whose keys carry their units (q_db, osnr_db, length_km, ...). The models and
their sources are described in docs/models.md.`
}

// calcFormat is the output option every calc topic shares.
type calcFormat struct {
	Format string `enum:"text,json" default:"text" help:"Output format: text or json."`
}

// calcItem is one printed quantity: key is the JSON key (unit included), label the text label.
type calcItem struct {
	key, label, unit string
	value            float64
	digits           int // decimals in text; -1 for %.4g
}

func dbItem(key, label string, v float64) calcItem { return calcItem{key, label, "dB", v, 3} }

// printCalc writes items as aligned text lines or one flat JSON object. A NaN or infinite result
// is an error (exit 2): it means the inputs are outside the model's domain.
func printCalc(pr *printer, format string, items []calcItem) error {
	for _, it := range items {
		if math.IsNaN(it.value) || math.IsInf(it.value, 0) {
			return usageErrorf("%s is not defined for these inputs (outside the model's domain)", it.label)
		}
	}
	if format == "json" {
		var b strings.Builder
		b.WriteString("{")
		for i, it := range items {
			if i > 0 {
				b.WriteString(",")
			}
			fmt.Fprintf(&b, "%q:%s", it.key, strconv.FormatFloat(it.value, 'g', -1, 64))
		}
		b.WriteString("}")
		pr.Printf("%s\n", b.String())
		return nil
	}
	width := 0
	for _, it := range items {
		width = max(width, len(it.label))
	}
	for _, it := range items {
		var v string
		if it.digits >= 0 {
			v = strconv.FormatFloat(it.value, 'f', it.digits, 64)
		} else {
			v = strconv.FormatFloat(it.value, 'g', 4, 64)
		}
		if strings.Trim(v, "-0.") == "" {
			v = strings.TrimPrefix(v, "-") // no "-0.000"
		}
		line := fmt.Sprintf("%-*s  %s", width, it.label, v)
		if it.unit != "" {
			line += " " + it.unit
		}
		pr.Printf("%s\n", line)
	}
	return nil
}

func checkBER(ber float64) error {
	if !(ber > 0 && ber < 0.5) {
		return usageErrorf("--ber %g is outside 0 < BER < 0.5", ber)
	}
	return nil
}

// CalcQCmd converts BER ↔ Q.
type CalcQCmd struct {
	calcFormat
	BER          *number `name:"ber" xor:"in" help:"Pre-FEC bit error ratio (0 < BER < 0.5)."`
	QdB          *number `name:"q-db" xor:"in" help:"Q-factor in dB (20·log10 Q)."`
	QLinear      *number `name:"q-linear" xor:"in" help:"Q-factor, linear."`
	ThresholdBER *number `name:"threshold-ber" help:"FEC threshold BER: also print the Q-margin against it."`
}

// Run prints BER, linear Q and Q in dB, and the Q-margin when a threshold is given.
func (c *CalcQCmd) Run(pr *printer) error {
	if c.BER == nil && c.QdB == nil && c.QLinear == nil {
		return usageErrorf("q: give one of --ber, --q-db or --q-linear")
	}
	var ber float64
	switch {
	case c.BER != nil:
		if err := checkBER(float64(*c.BER)); err != nil {
			return err
		}
		ber = float64(*c.BER)
	case c.QdB != nil:
		ber = optics.BERFromQdB(float64(*c.QdB))
	case c.QLinear != nil:
		if !(float64(*c.QLinear) > 0) {
			return usageErrorf("--q-linear %g must be positive", float64(*c.QLinear))
		}
		ber = optics.BERFromQ(float64(*c.QLinear))
	}
	items := []calcItem{
		{"ber", "pre-FEC BER", "", ber, -1},
		{"q_linear", "Q-factor (linear)", "", optics.QFromBER(ber), 4},
		dbItem(parse.QdB.Column(), "Q-factor", optics.QdBFromBER(ber)),
	}
	if c.QdB != nil {
		items[2].value = float64(*c.QdB) // keep the user's figure exactly
	}
	if c.ThresholdBER != nil {
		if !(float64(*c.ThresholdBER) > 0 && float64(*c.ThresholdBER) < 0.5) {
			return usageErrorf("--threshold-ber %g is outside 0 < BER < 0.5", float64(*c.ThresholdBER))
		}
		items = append(items,
			calcItem{"threshold_ber", "FEC threshold BER", "", float64(*c.ThresholdBER), -1},
			dbItem("threshold_q_db", "Q-factor at threshold", optics.QdBFromBER(float64(*c.ThresholdBER))),
			dbItem("q_margin_db", "Q-margin", items[2].value-optics.QdBFromBER(float64(*c.ThresholdBER))))
	}
	return printCalc(pr, c.Format, items)
}

// modulationFlag parses --modulation.
func modulationFlag(s string) (optics.Modulation, error) {
	m, err := optics.ParseModulation(s)
	if err != nil {
		return 0, usageErrorf("--modulation: %v", strings.TrimPrefix(err.Error(), "optics: "))
	}
	return m, nil
}

// CalcBERCmd gives BER from Q or from eSNR.
type CalcBERCmd struct {
	calcFormat
	QdB        *number `name:"q-db" xor:"in" help:"Q-factor in dB."`
	ESNRdB     *number `name:"esnr-db" xor:"in" help:"SNR per symbol Es/N0 in dB (needs --modulation)."`
	Modulation string  `help:"Modulation: dp-qpsk, dp-8qam, dp-16qam, dp-32qam, dp-64qam." default:"dp-16qam"`
}

// Run prints the BER.
func (c *CalcBERCmd) Run(pr *printer) error {
	if c.QdB == nil && c.ESNRdB == nil {
		return usageErrorf("ber: give --q-db, or --esnr-db with --modulation")
	}
	if c.QdB != nil {
		ber := optics.BERFromQdB(float64(*c.QdB))
		return printCalc(pr, c.Format, []calcItem{dbItem(parse.QdB.Column(), "Q-factor", float64(*c.QdB)), {"ber", "pre-FEC BER", "", ber, -1}})
	}
	m, err := modulationFlag(c.Modulation)
	if err != nil {
		return err
	}
	ber := optics.BERFromSNRdB(m, float64(*c.ESNRdB))
	return printCalc(pr, c.Format, []calcItem{
		dbItem(parse.ESNRdB.Column(), "eSNR (Es/N0 per polarization)", float64(*c.ESNRdB)),
		{"bits_per_symbol", "bits per symbol (" + m.String() + ")", "", float64(m.BitsPerSymbol()), 0},
		{"ber", "pre-FEC BER (AWGN, Gray)", "", ber, -1},
		dbItem(parse.QdB.Column(), "Q-factor", optics.QdBFromBER(ber)),
	})
}

// CalcOSNRCmd relates BER, eSNR and OSNR for a modulation and symbol rate.
type CalcOSNRCmd struct {
	calcFormat
	BER           *number `name:"ber" xor:"in" help:"Pre-FEC BER to reach (e.g. the FEC threshold)."`
	OSNRdB        *number `name:"osnr-db" xor:"in" help:"OSNR in 0.1 nm, dB: print the eSNR and BER it gives."`
	Modulation    string  `required:"" placeholder:"FORMAT" help:"Modulation: dp-qpsk, dp-8qam, dp-16qam, dp-32qam, dp-64qam."`
	BaudGBd       float64 `name:"baud-gbd" required:"" placeholder:"GBD" help:"Symbol rate in GBd."`
	Polarizations int     `default:"2" help:"Polarizations carrying data (1 or 2)."`
	PenaltyDB     number  `name:"penalty-db" default:"0" help:"Implementation penalty in dB added to the theoretical eSNR."`
}

// Run prints esnr_db and osnr_db.
func (c *CalcOSNRCmd) Run(pr *printer) error {
	if c.BER == nil && c.OSNRdB == nil {
		return usageErrorf("osnr: give --ber (the BER to reach) or --osnr-db (the OSNR you have)")
	}
	m, err := modulationFlag(c.Modulation)
	if err != nil {
		return err
	}
	if !(c.BaudGBd > 0 && c.BaudGBd < 1000) {
		return usageErrorf("--baud-gbd %g must be between 0 and 1000 GBd", c.BaudGBd)
	}
	if c.Polarizations != 1 && c.Polarizations != 2 {
		return usageErrorf("--polarizations %d must be 1 or 2", c.Polarizations)
	}
	if !(float64(c.PenaltyDB) >= 0 && float64(c.PenaltyDB) < 30) {
		return usageErrorf("--penalty-db %g must be between 0 and 30 dB", float64(c.PenaltyDB))
	}
	offset := optics.OSNRdBFromSNRdB(0, c.BaudGBd, c.Polarizations)
	var ber, theory, esnr float64
	if c.BER != nil {
		if err := checkBER(float64(*c.BER)); err != nil {
			return err
		}
		ber = float64(*c.BER)
		theory = optics.SNRdBFromBER(m, ber)
		esnr = theory + float64(c.PenaltyDB)
	} else {
		esnr = optics.SNRdBFromOSNRdB(float64(*c.OSNRdB), c.BaudGBd, c.Polarizations)
		theory = esnr - float64(c.PenaltyDB)
		ber = optics.BERFromSNRdB(m, theory)
	}
	items := []calcItem{
		{"ber", "pre-FEC BER", "", ber, -1},
		{"baud_gbd", "symbol rate (" + m.String() + ")", "GBd", c.BaudGBd, 3},
		dbItem("esnr_theory_db", "eSNR, AWGN theory", theory),
		dbItem("penalty_db", "implementation penalty", float64(c.PenaltyDB)),
		dbItem(parse.ESNRdB.Column(), "eSNR (Es/N0 per polarization)", esnr),
		dbItem("osnr_offset_db", "OSNR − eSNR (12.5 GHz ref.)", offset),
		dbItem(parse.OSNRdB.Column(), "OSNR (0.1 nm)", esnr+offset),
	}
	return printCalc(pr, c.Format, items)
}

// fibreAt resolves --fiber or --dispersion-ps-nm-km and the wavelength.
type fibreAt struct {
	FrequencyTHz *number `name:"frequency-thz" xor:"freq" help:"Channel frequency in THz (default 193.1)."`
	WavelengthNm *number `name:"wavelength-nm" xor:"freq" help:"Channel wavelength in nm."`
	Fiber        string  `default:"g652" help:"Fibre type: g652, g652-bound, g655, g654e."`
	DispersionPs *number `name:"dispersion-ps-nm-km" help:"Dispersion coefficient D in ps/(nm·km), instead of the fibre type's."`
}

func (f fibreAt) resolve() (optics.Fiber, float64, float64, error) {
	thz := optics.GridAnchorTHz
	switch {
	case f.FrequencyTHz != nil:
		thz = float64(*f.FrequencyTHz)
	case f.WavelengthNm != nil:
		thz = optics.THzFromWavelengthNm(float64(*f.WavelengthNm))
	}
	if !(thz >= 150 && thz <= 250) {
		return optics.Fiber{}, 0, 0, usageErrorf("channel frequency %g THz is outside 150…250 THz", thz)
	}
	nm := optics.WavelengthNmFromTHz(thz)
	fib, err := optics.FiberByName(f.Fiber)
	if err != nil {
		return optics.Fiber{}, 0, 0, usageErrorf("--fiber: %v", strings.TrimPrefix(err.Error(), "optics: "))
	}
	if f.DispersionPs != nil {
		fib = optics.CustomFiber(fib, nm, float64(*f.DispersionPs), fib.SlopePsNm2Km(nm))
	}
	return fib, thz, nm, nil
}

// CalcLengthCmd gives the fibre length implied by a CD.
type CalcLengthCmd struct {
	calcFormat
	fibreAt
	CDPsNm number `name:"cd-ps-nm" required:"" placeholder:"PS/NM" help:"Measured accumulated chromatic dispersion in ps/nm."`
}

// Run prints length_km.
func (c *CalcLengthCmd) Run(pr *printer) error {
	fib, thz, nm, err := c.resolve()
	if err != nil {
		return err
	}
	d := fib.DispersionPsNmKm(nm)
	if d == 0 {
		return usageErrorf("the dispersion coefficient is 0: no length follows from a CD")
	}
	return printCalc(pr, c.Format, []calcItem{
		{parse.CDpsPerNm.Column(), "chromatic dispersion", "ps/nm", float64(c.CDPsNm), 1},
		{parse.FrequencyTHz.Column(), "frequency", "THz", thz, 5},
		{"wavelength_nm", "wavelength", "nm", nm, 3},
		{"dispersion_ps_nm_km", "D (" + fib.Name + ")", "ps/(nm·km)", d, 3},
		{"length_km", "implied fibre length", "km", optics.ImpliedLengthKm(float64(c.CDPsNm), fib, nm), 2},
	})
}

// CalcCDCmd gives the CD of a fibre length.
type CalcCDCmd struct {
	calcFormat
	fibreAt
	LengthKm float64 `name:"length-km" required:"" placeholder:"KM" help:"Fibre length in km."`
}

// Run prints cd_ps_nm.
func (c *CalcCDCmd) Run(pr *printer) error {
	if !(c.LengthKm >= 0) {
		return usageErrorf("--length-km %g must not be negative", c.LengthKm)
	}
	fib, thz, nm, err := c.resolve()
	if err != nil {
		return err
	}
	d := fib.DispersionPsNmKm(nm)
	return printCalc(pr, c.Format, []calcItem{
		{"length_km", "fibre length", "km", c.LengthKm, 2},
		{parse.FrequencyTHz.Column(), "frequency", "THz", thz, 5},
		{"wavelength_nm", "wavelength", "nm", nm, 3},
		{"dispersion_ps_nm_km", "D (" + fib.Name + ")", "ps/(nm·km)", d, 3},
		{"slope_ps_nm2_km", "dispersion slope", "ps/(nm²·km)", fib.SlopePsNm2Km(nm), 4},
		{parse.CDpsPerNm.Column(), "chromatic dispersion", "ps/nm", d * c.LengthKm, 1},
	})
}

// CalcDGDCmd gives Maxwellian DGD statistics.
type CalcDGDCmd struct {
	calcFormat
	MeanPs      *number `name:"mean-ps" xor:"mean" help:"Mean DGD in ps."`
	PMDCoeff    *number `name:"pmd-ps-sqrt-km" xor:"mean" help:"PMD coefficient in ps/√km (needs --length-km)."`
	LengthKm    *number `name:"length-km" help:"Route length in km, with --pmd-ps-sqrt-km."`
	LimitPs     *number `name:"limit-ps" help:"Instantaneous DGD limit in ps: print the probability of exceeding it."`
	Probability *number `name:"probability" help:"Exceedance probability: print the DGD exceeded with that probability."`
}

// Run prints exceed_probability and/or the quantile.
func (c *CalcDGDCmd) Run(pr *printer) error {
	if c.MeanPs == nil && c.PMDCoeff == nil {
		return usageErrorf("dgd: give --mean-ps, or --pmd-ps-sqrt-km with --length-km")
	}
	var mean float64
	var items []calcItem
	if c.MeanPs != nil {
		mean = float64(*c.MeanPs)
	} else {
		if c.LengthKm == nil {
			return usageErrorf("--pmd-ps-sqrt-km needs --length-km")
		}
		if !(float64(*c.PMDCoeff) >= 0) || !(float64(*c.LengthKm) >= 0) {
			return usageErrorf("--pmd-ps-sqrt-km and --length-km must not be negative")
		}
		mean = optics.MeanDGDPs(float64(*c.PMDCoeff), float64(*c.LengthKm))
		items = append(items,
			calcItem{"pmd_ps_sqrt_km", "PMD coefficient", "ps/√km", float64(*c.PMDCoeff), 3},
			calcItem{"length_km", "route length", "km", float64(*c.LengthKm), 2})
	}
	if !(mean > 0) {
		return usageErrorf("the mean DGD must be positive (got %g ps)", mean)
	}
	if c.LimitPs == nil && c.Probability == nil {
		return usageErrorf("give --limit-ps, --probability, or both")
	}
	items = append(items,
		calcItem{"mean_dgd_ps", "mean DGD", "ps", mean, 3},
		calcItem{"rms_dgd_ps", "rms DGD", "ps", mean * math.Sqrt(3*math.Pi/8), 3})
	if c.LimitPs != nil {
		if !(float64(*c.LimitPs) > 0) {
			return usageErrorf("--limit-ps %g must be positive", float64(*c.LimitPs))
		}
		p := optics.MaxwellExceedProbability(float64(*c.LimitPs), mean)
		items = append(items,
			calcItem{"limit_ps", "DGD limit", "ps", float64(*c.LimitPs), 3},
			calcItem{"limit_to_mean", "limit / mean", "", float64(*c.LimitPs) / mean, 3},
			calcItem{"exceed_probability", "P(DGD > limit)", "", p, -1},
			calcItem{"exceed_minutes_per_year", "expected time above limit", "min/year", p * 365.25 * 24 * 60, -1})
	}
	if c.Probability != nil {
		if !(float64(*c.Probability) > 0 && float64(*c.Probability) < 1) {
			return usageErrorf("--probability %g must be between 0 and 1", float64(*c.Probability))
		}
		items = append(items,
			calcItem{"probability", "exceedance probability", "", float64(*c.Probability), -1},
			calcItem{"dgd_at_probability_ps", "DGD exceeded with it", "ps", optics.MaxwellQuantile(float64(*c.Probability), mean), 3})
	}
	return printCalc(pr, c.Format, items)
}

// CalcPowerCmd converts dBm ↔ mW.
type CalcPowerCmd struct {
	calcFormat
	DBm *number `name:"dbm" xor:"in" help:"Power in dBm."`
	MW  *number `name:"mw" xor:"in" help:"Power in mW."`
}

// Run prints power_dbm and power_mw.
func (c *CalcPowerCmd) Run(pr *printer) error {
	if c.DBm == nil && c.MW == nil {
		return usageErrorf("power: give --dbm or --mw")
	}
	var dbm, mw float64
	if c.DBm != nil {
		dbm, mw = float64(*c.DBm), optics.DBmToMW(float64(*c.DBm))
	} else {
		if !(float64(*c.MW) > 0) {
			return usageErrorf("--mw %g must be positive", float64(*c.MW))
		}
		dbm, mw = optics.MWToDBm(float64(*c.MW)), float64(*c.MW)
	}
	return printCalc(pr, c.Format, []calcItem{
		{"power_dbm", "power", "dBm", dbm, 3},
		{"power_mw", "power", "mW", mw, -1},
		{"power_uw", "power", "µW", mw * 1000, -1},
	})
}

// CalcGridCmd places a frequency or wavelength on the DWDM grid.
type CalcGridCmd struct {
	calcFormat
	THz            *number `name:"thz" xor:"in" help:"Frequency in THz."`
	Nm             *number `name:"nm" xor:"in" help:"Vacuum wavelength in nm."`
	GranularityGHz float64 `name:"granularity-ghz" default:"6.25" help:"Grid granularity in GHz: 6.25 (flexible grid), 12.5, 25, 50 or 100."`
}

// Run prints the nearest grid point and the offset from it.
func (c *CalcGridCmd) Run(pr *printer) error {
	if c.THz == nil && c.Nm == nil {
		return usageErrorf("grid: give --thz or --nm")
	}
	if !(c.GranularityGHz > 0) {
		return usageErrorf("--granularity-ghz %g must be positive", c.GranularityGHz)
	}
	var thz float64
	if c.THz != nil {
		thz = float64(*c.THz)
	} else {
		thz = optics.THzFromWavelengthNm(float64(*c.Nm))
	}
	if !(thz >= 150 && thz <= 250) {
		return usageErrorf("frequency %g THz is outside 150…250 THz (DWDM bands)", thz)
	}
	g, n := optics.NearestGridTHz(thz, c.GranularityGHz)
	return printCalc(pr, c.Format, []calcItem{
		{parse.FrequencyTHz.Column(), "frequency", "THz", thz, 6},
		{"wavelength_nm", "wavelength", "nm", optics.WavelengthNmFromTHz(thz), 3},
		{"granularity_ghz", "grid granularity", "GHz", c.GranularityGHz, 2},
		{"grid_n", "grid index n (193.1 THz + n·step)", "", float64(n), 0},
		{"grid_frequency_thz", "nearest grid frequency", "THz", g, 6},
		{"grid_wavelength_nm", "nearest grid wavelength", "nm", optics.WavelengthNmFromTHz(g), 3},
		{"offset_ghz", "offset from grid", "GHz", (thz - g) * 1000, 3},
	})
}

// CalcASECmd gives the ASE OSNR of N identical amplifiers.
type CalcASECmd struct {
	calcFormat
	PinDBm       number  `name:"pin-dbm" required:"" placeholder:"DBM" help:"Per-channel input power of each amplifier in dBm."`
	NFdB         float64 `name:"nf-db" default:"5.5" help:"Amplifier noise figure in dB."`
	Amplifiers   int     `default:"1" help:"Number of identical amplifiers in the chain."`
	FrequencyTHz float64 `name:"frequency-thz" default:"193.1" help:"Channel frequency in THz."`
}

// Run prints the photon-noise constant and the chain's OSNR.
func (c *CalcASECmd) Run(pr *printer) error {
	if c.Amplifiers < 1 {
		return usageErrorf("--amplifiers %d must be at least 1", c.Amplifiers)
	}
	if !(c.FrequencyTHz >= 150 && c.FrequencyTHz <= 250) {
		return usageErrorf("--frequency-thz %g is outside 150…250 THz", c.FrequencyTHz)
	}
	if !(c.NFdB >= 0 && c.NFdB < 30) {
		return usageErrorf("--nf-db %g must be between 0 and 30 dB", c.NFdB)
	}
	one := optics.AmplifierOSNRdB(float64(c.PinDBm), c.NFdB, c.FrequencyTHz)
	return printCalc(pr, c.Format, []calcItem{
		{"pin_dbm", "input power per amplifier", "dBm", float64(c.PinDBm), 2},
		dbItem("nf_db", "noise figure", c.NFdB),
		{"amplifiers", "amplifiers", "", float64(c.Amplifiers), 0},
		{"photon_noise_dbm", "h·ν·Bref (12.5 GHz)", "dBm", optics.PhotonNoiseDBm(c.FrequencyTHz, optics.ReferenceBandwidthGHz), 3},
		dbItem("osnr_one_db", "OSNR of one amplifier (0.1 nm)", one),
		dbItem(parse.OSNRdB.Column(), "OSNR of the chain (0.1 nm)", one-optics.LinearToDB(float64(c.Amplifiers))),
	})
}
