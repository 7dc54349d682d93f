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

// budget builds the port's Budget; nil without an eSNR.
func (pc *portCtx) budget() *Budget {
	f := pc.forwardModel()
	if !finite(f.measuredDB) {
		return nil
	}
	b := &Budget{MeasuredESNRdB: round2(f.measuredDB), ASEFrom: f.aseFrom}
	var noise []float64
	type term struct {
		snr          float64
		cost, snrOut **float64
	}
	terms := []term{{f.aseSNRdB, &b.ASEdB, &b.ASESNRdB}, {f.nliSNRdB, &b.NLIdB, &b.NLISNRdB}, {f.trxSNRdB, &b.TransceiverDB, &b.TransceiverSNRdB}}
	total := 0.0
	for _, t := range terms {
		if finite(t.snr) {
			n := 1 / optics.DBToLinear(t.snr)
			noise = append(noise, n)
			total += n
		} else {
			noise = append(noise, math.NaN())
		}
	}
	for i, t := range terms {
		if !finite(t.snr) {
			continue
		}
		*t.snrOut = ptr(round2(t.snr))
		if rest := total - noise[i]; rest > 0 {
			*t.cost = ptr(round2(optics.LinearToDB(total / rest)))
		} else {
			*t.cost = ptr(math.Inf(1)) // the only term: ptr makes it null
		}
	}
	pen := 0.0
	if pc.has(parse.PDLdB) {
		b.PDLdB = ptr(round2(f.pdlDB))
		pen += f.pdlDB
	}
	if pc.has(parse.DGDps) {
		b.DGDdB = ptr(round2(f.dgdDB))
		pen += f.dgdDB
	}
	model := math.Inf(1)
	if total > 0 {
		model = -optics.LinearToDB(total)
	}
	model -= pen
	if !finite(model) {
		return nil
	}
	b.ModelESNRdB = round2(model)
	b.UnexplainedDB = round2(model - f.measuredDB)
	return b
}

func round2(x float64) float64 { return math.Round(x*100) / 100 }
