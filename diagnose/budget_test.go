package diagnose

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// The SNR budget against values computed independently with Python's math library:
// SNRs 20 (ASE), 25 (NLI) and 15 dB (transceiver) give N = 10^-2 + 10^-2.5 + 10^-1.5, a model
// eSNR of −10·log10 N = 13.4887 dB and costs 10·log10(N/(N − n_i)) of 1.0974, 0.3180 and
// 5.3180 dB; with 0.5 dB of PDL and 0.1 dB of DGD penalty and 13.0 dB measured the unexplained
// remainder is 13.4887 − 0.6 − 13.0 = −0.1113 dB.
func TestSNRBudget(t *testing.T) {
	b := snrBudget(13.0, 20, 25, 15, 0.5, 0.1)
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"ase", *b.ASEdB, 1.0974}, {"nli", *b.NLIdB, 0.3180}, {"transceiver", *b.TransceiverDB, 5.3180},
		{"model", b.ModelESNRdB, 13.4887 - 0.6}, {"unexplained", b.UnexplainedDB, -0.1113},
	} {
		if math.Abs(c.got-c.want) > 0.006 { // the budget rounds to 0.01 dB
			t.Errorf("%s: %.4f dB, want %.4f", c.name, c.got, c.want)
		}
	}
	// Unknown terms are null in the JSON, never 0: no NLI without a plan, no PDL column.
	b = snrBudget(13.0, 20, math.NaN(), 15, math.NaN(), 0)
	js, err := json.Marshal(b)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"nli_db":null`, `"pdl_db":null`, `"filtering_db":null`, `"dgd_db":0`, `"unexplained_db":`} {
		if !strings.Contains(string(js), want) {
			t.Errorf("budget JSON %s lacks %s", js, want)
		}
	}
	if snrBudget(math.NaN(), 20, 25, 15, 0, 0) != nil {
		t.Error("a budget without a measured eSNR")
	}
}
