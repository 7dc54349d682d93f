package diagnose_test

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

// These tests run the engine on ports made by samples/synth, which builds each port from a link
// plan and the physics models with a fault injected; the engine never sees what was injected.
// The check is the cause ranking, not a number: every scenario is judged across 20 seeds and
// severities spread over synth's whole 0…1 range.

func mustRules(t testing.TB) rules.Rules {
	t.Helper()
	r, err := rules.DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// judge runs the engine on a synthetic case, with its plan when withPlan.
func judge(t testing.TB, c synth.Case, r rules.Rules, withPlan bool) diagnose.PortResult {
	t.Helper()
	if !withPlan {
		return diagnose.AnalyzePort(c.Series, c.Profile, nil, nil, r)
	}
	plan := c.Plan
	exp, err := optics.ExpectLink(plan, c.Profile)
	if err != nil {
		t.Fatalf("ExpectLink: %v", err)
	}
	return diagnose.AnalyzePort(c.Series, c.Profile, &plan, &exp, r)
}

func causeList(p diagnose.PortResult) string {
	var s []string
	for _, c := range p.Causes {
		s = append(s, fmt.Sprintf("%s %.2f", c.ID, c.Confidence))
	}
	return "[" + strings.Join(s, ", ") + "]"
}

func ids(p diagnose.PortResult) []diagnose.CauseID {
	var s []diagnose.CauseID
	for _, c := range p.Causes {
		s = append(s, c.ID)
	}
	return s
}

const seeds = 20

// severity spreads the seeds over synth's severity range 0…1.
func severity(seed int64) float64 { return float64(seed-1) / float64(seeds-1) }

type scenario struct {
	profile  string
	samples  int
	withPlan bool
}

func (s scenario) String() string {
	return fmt.Sprintf("%s/%d samples/plan=%v", s.profile, s.samples, s.withPlan)
}

var scenarios = []scenario{
	{"400g-dp-16qam-cfec", 1440, true},
	{"400g-dp-16qam-cfec", 1440, false},
	{"200g-dp-16qam", 720, true},
	{"100g-dp-qpsk", 720, true},
	{"400g-dp-16qam-ofec", 720, true},
	{"800g-dp-16qam", 720, true},
}

// canInject reports whether synth can make the cause on the profile (it refuses cd-over-limit
// on modules whose CD range no regional route reaches).
func canInject(cause diagnose.CauseID, profile string) bool {
	return cause != diagnose.CauseCDOverLimit || profile == "400g-dp-16qam-cfec"
}

func TestHealthyPortsPassWithNoCause(t *testing.T) {
	r := mustRules(t)
	for _, sc := range scenarios {
		for seed := int64(1); seed <= seeds; seed++ {
			c, err := synth.Make(synth.Spec{Seed: seed, ProfileID: sc.profile, Samples: sc.samples})
			if err != nil {
				t.Fatal(err)
			}
			p := judge(t, c, r, sc.withPlan)
			if len(p.Causes) != 0 || p.Verdict != diagnose.Pass {
				t.Errorf("%v seed %d: verdict %s causes %s, want pass and none", sc, seed, p.Verdict, causeList(p))
			}
		}
	}
}

func TestEveryCauseIsTopCauseOfItsScenario(t *testing.T) {
	r := mustRules(t)
	for _, cause := range synth.AllCauses {
		for _, sc := range scenarios {
			if !canInject(cause, sc.profile) {
				continue
			}
			// Without a plan there is no expected CD (DESIGN.md: every cause but cd-mismatch is
			// judged without a plan); nonlinear without a plan is a known weakness, tested below.
			if !sc.withPlan && (cause == diagnose.CauseCDMismatch || cause == diagnose.CauseNonlinear) {
				continue
			}
			t.Run(string(cause)+"/"+sc.String(), func(t *testing.T) {
				for seed := int64(1); seed <= seeds; seed++ {
					c, err := synth.Make(synth.Spec{Seed: seed, Severity: severity(seed), Causes: []diagnose.CauseID{cause}, ProfileID: sc.profile, Samples: sc.samples})
					if err != nil {
						t.Fatal(err)
					}
					p := judge(t, c, r, sc.withPlan)
					if len(p.Causes) == 0 || p.Causes[0].ID != cause {
						t.Errorf("seed %d severity %.2f: causes %s, want %s on top", seed, severity(seed), causeList(p), cause)
						continue
					}
					if p.Verdict == diagnose.Pass {
						t.Errorf("seed %d: verdict pass with cause %s listed", seed, cause)
					}
					if c.Verdict == diagnose.Fail && p.Verdict != diagnose.Fail {
						t.Errorf("seed %d: verdict %s, but synth crossed a module limit (fail)", seed, p.Verdict)
					}
					for _, e := range p.Causes[0].Evidence {
						if !strings.ContainsAny(e, "0123456789") {
							t.Errorf("seed %d: evidence without a number: %q", seed, e)
						}
					}
					if len(p.Causes[0].Actions) == 0 {
						t.Errorf("seed %d: %s has no field actions", seed, cause)
					}
				}
			})
		}
	}
}

// Two troubles on one port: both are listed.
func TestMixedCausesAreBothListed(t *testing.T) {
	r := mustRules(t)
	for _, mix := range [][]diagnose.CauseID{
		{diagnose.CauseRxPowerLow, diagnose.CauseSOPTransient},
		{diagnose.CausePDLHigh, diagnose.CauseLOOffset},
		{diagnose.CausePMD, diagnose.CauseSOPTransient},
	} {
		for seed := int64(1); seed <= seeds; seed++ {
			c, err := synth.Make(synth.Spec{Seed: seed, Severity: severity(seed), Causes: mix, Samples: 720})
			if err != nil {
				t.Fatal(err)
			}
			p := judge(t, c, r, true)
			got := ids(p)
			for _, want := range mix {
				if !slices.Contains(got, want) {
					t.Errorf("%v seed %d severity %.2f: causes %s lack %s", mix, seed, severity(seed), causeList(p), want)
				}
			}
		}
	}
}

// Nonlinear interference without a plan can only be told from the eSNR shortfall against the
// reported OSNR, which a transceiver fault and filtering leave too: without the plan's GN model
// the three are one differential. This records how often nonlinear is in its top three, and
// fails if that drops below half or if the top cause is outside the noise family.
func TestNonlinearWithoutPlanDetectionRate(t *testing.T) {
	r := mustRules(t)
	found := 0
	for seed := int64(1); seed <= seeds; seed++ {
		c, err := synth.Make(synth.Spec{Seed: seed, Severity: severity(seed), Causes: []diagnose.CauseID{diagnose.CauseNonlinear}})
		if err != nil {
			t.Fatal(err)
		}
		p := judge(t, c, r, false)
		got := ids(p)
		if len(got) > 3 {
			got = got[:3]
		}
		if slices.Contains(got, diagnose.CauseNonlinear) {
			found++
		}
		if len(got) > 0 && !slices.Contains([]diagnose.CauseID{diagnose.CauseNonlinear, diagnose.CauseTransceiver, diagnose.CauseFiltering}, got[0]) {
			t.Errorf("seed %d: top cause outside the noise family: %s", seed, causeList(p))
		}
	}
	t.Logf("nonlinear in the top three without a plan in %d of %d seeds", found, seeds)
	if found < seeds/2 {
		t.Errorf("nonlinear in the top three without a plan in only %d of %d seeds", found, seeds)
	}
}
