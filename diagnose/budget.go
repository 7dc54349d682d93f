package diagnose

import (
	"math"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
)

// Budget is the SNR-deficit decomposition of one port from its forward model (noise.go):
// what each mechanism costs the eSNR, in dB. For a noise term (ASE, NLI, the transceiver's own
// noise) the cost is how much the model's eSNR would rise without that term alone:
// 10·log10(N/(N − n_i)) with N the model's total noise-to-signal ratio (noise powers add); for a
// penalty (PDL, DGD) it is the penalty. Unexplained is the model's eSNR minus the measured one:
// positive when the port is worse than every known term says (a fault the model does not hold:
// a module below its ceiling, filtering, a mis-reported estimate), negative when it is better
// (the ceiling is conservative, or the reported OSNR pessimistic). A term the port cannot give
// (no OSNR and no plan for ASE, no plan for NLI, no PDL or DGD column) is null; filtering is
// not modelled (no filter shapes are known) and stays null, so its cost is in unexplained.
type Budget struct {
	// MeasuredESNRdB is the median eSNR of lit samples (measured, or implied by the BER).
	MeasuredESNRdB float64 `json:"esnr_db"`
	// ModelESNRdB is the eSNR the forward model expects from the known terms.
	ModelESNRdB float64 `json:"model_esnr_db"`
	// The cost of each mechanism, dB.
	ASEdB         *float64 `json:"ase_db"`
	NLIdB         *float64 `json:"nli_db"`
	TransceiverDB *float64 `json:"transceiver_db"`
	PDLdB         *float64 `json:"pdl_db"`
	DGDdB         *float64 `json:"dgd_db"`
	FilteringDB   *float64 `json:"filtering_db"`
	UnexplainedDB float64  `json:"unexplained_db"`
	// The SNR (dB) each noise term alone would allow.
	ASESNRdB         *float64 `json:"ase_snr_db"`
	NLISNRdB         *float64 `json:"nli_snr_db"`
	TransceiverSNRdB *float64 `json:"transceiver_snr_db"`
	// ASEFrom says where the ASE term comes from ("reported OSNR" or "plan's ASE OSNR").
	ASEFrom string `json:"ase_from,omitempty"`
}

// budget builds the port's Budget from its forward model; nil without an eSNR.
func (pc *portCtx) budget() *Budget {
	f := pc.forwardModel()
	pdl, dgd := math.NaN(), math.NaN()
	if pc.has(parse.PDLdB) {
		pdl = f.pdlDB
	}
	if pc.has(parse.DGDps) {
		dgd = f.dgdDB
	}
	b := snrBudget(f.measuredDB, f.aseSNRdB, f.nliSNRdB, f.trxSNRdB, pdl, dgd)
	if b != nil {
		b.ASEFrom = f.aseFrom
	}
	return b
}

// snrBudget decomposes a measured eSNR (dB) over the noise terms given as the SNR (dB) each
// alone allows (NaN or +Inf: not known / absent) and the penalties (dB; NaN: not known), as the
// Budget type says. Nil when the eSNR is unknown or no term is known.
func snrBudget(measuredDB, aseDB, nliDB, trxDB, pdlDB, dgdDB float64) *Budget {
	if !finite(measuredDB) {
		return nil
	}
	b := &Budget{MeasuredESNRdB: round2(measuredDB)}
	terms := []struct {
		snr          float64
		cost, snrOut **float64
	}{{aseDB, &b.ASEdB, &b.ASESNRdB}, {nliDB, &b.NLIdB, &b.NLISNRdB}, {trxDB, &b.TransceiverDB, &b.TransceiverSNRdB}}
	total := 0.0 // N: Σ noise-to-signal ratios, linear
	for _, t := range terms {
		if finite(t.snr) {
			total += 1 / optics.DBToLinear(t.snr)
		}
	}
	if !(total > 0) {
		return nil
	}
	for _, t := range terms {
		if !finite(t.snr) {
			continue
		}
		*t.snrOut = ptr(round2(t.snr))
		if rest := total - 1/optics.DBToLinear(t.snr); rest > 0 {
			*t.cost = ptr(round2(optics.LinearToDB(total / rest)))
		}
	}
	model := -optics.LinearToDB(total)
	for _, p := range []struct {
		v   float64
		out **float64
	}{{pdlDB, &b.PDLdB}, {dgdDB, &b.DGDdB}} {
		if finite(p.v) {
			*p.out = ptr(round2(p.v))
			model -= p.v
		}
	}
	b.ModelESNRdB = round2(model)
	b.UnexplainedDB = round2(model - measuredDB)
	return b
}

func round2(x float64) float64 { return math.Round(x*100) / 100 }
