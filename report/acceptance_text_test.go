package report

import (
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/soak"
)

// A limit's source is sorted into a short class; a value from the user's rules file is a
// contract value whatever it cites, and a recalled figure is "from memory" whatever it cites.
func TestSourceClass(t *testing.T) {
	for src, want := range map[string]string{
		"user rules file contract.yaml":                             SourceContract,
		"profile x: OIF-400ZR-01.0, from memory":                    SourceMemory,
		"profile x: OIF-400ZR-01.0 (secondary source only)":         SourceMemory,
		"plan C-1 via the fibre model; tolerance ±100 ps/nm":        SourcePlan,
		"common practice: error-free after FEC":                     SourcePractice,
		"profile x: OIF-400ZR-01.0 as tabled in X. Liu — confirmed": SourceAgreement,
		"ITU-T G.975.1 App. I.9":                                    SourceStandard,
		"derived: 2 polarizations × 4 bit/symbol × 59.84375 GBd":    SourceDerived,
	} {
		if got := SourceClass(src); got != want {
			t.Errorf("SourceClass(%q) = %q, want %q", src, got, want)
		}
	}
}

// The verdict sentence names the deciding criterion with its figures, or the test-period
// shortfall for an incomplete port.
func TestVerdictSentence(t *testing.T) {
	fail := diagnose.PortResult{Verdict: diagnose.Fail, Criteria: []diagnose.Criterion{
		{Name: "OSNR margin", Measured: 30, Limit: 26, Margin: 4, Unit: "dB", Verdict: diagnose.Pass},
		{Name: "Received power above the sensitivity limit", Measured: -13.9, Limit: -12, Margin: -1.9, Unit: "dBm", Verdict: diagnose.Fail},
		{Name: "Uncorrected FEC blocks (total)", Measured: 1, Limit: 0, Margin: -1, Unit: "blocks", Verdict: diagnose.Fail},
	}}
	if got, want := VerdictSentence(&fail), "Fails on received power above the sensitivity limit (and 1 more): -13.90 dBm against a limit of -12.00 dBm, margin -1.90 dB."; got != want {
		t.Errorf("got  %q\nwant %q", got, want)
	}
	cov := soak.Assess([]int64{0, 60_000}, 2, 0, 0.95) // the shortfall text is soak's
	inc := diagnose.PortResult{Verdict: diagnose.Incomplete, TestPeriod: &cov}
	if got := VerdictSentence(&inc); !strings.HasPrefix(got, "Incomplete: every judged limit is met, but ") || !strings.Contains(got, "cannot be accepted") {
		t.Errorf("incomplete: %q", got)
	}
}

// Counts print in the singular for one, and a value that rounds to zero has no sign.
func TestFormatValueWords(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{{1, "blocks", "1 block"}, {-1, "blocks", "-1 block"}, {2, "blocks", "2 blocks"}, {1, "samples", "1 sample"}, {-0.2, "km", "0 km"}, {-0.004, "dB", "0.00 dB"},
		{0, "", "0"}, {3.1e-3, "", "3.10e-03"}, {12345678, "blocks", "12 345 678 blocks"}, {-91112, "blocks", "-91 112 blocks"}} {
		if got := FormatValue(tc.v, tc.unit); got != tc.want {
			t.Errorf("FormatValue(%g, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}
