package diagnose_test

import (
	"fmt"
	"os"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

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

func causeIDs(p diagnose.PortResult) string {
	var s []string
	for _, c := range p.Causes {
		s = append(s, fmt.Sprintf("%s %.2f", c.ID, c.Confidence))
	}
	return strings.Join(s, ", ")
}

func TestExploreScenarios(t *testing.T) {
	r := mustRules(t)
	for _, cause := range append([]string{""}, synth.AllCauses...) {
		for _, withPlan := range []bool{true, false} {
			ok, total := 0, 0
			var bad []string
			for seed := int64(1); seed <= 20; seed++ {
				sev := float64(seed%5) / 4
				spec := synth.Spec{Seed: seed, Severity: sev, ProfileID: os.Getenv("DBG_PROFILE")}
				if cause != "" {
					spec.Causes = []string{cause}
				}
				c, err := synth.Make(spec)
				if err != nil {
					t.Fatal(err)
				}
				p := judge(t, c, r, withPlan)
				total++
				good := false
				if cause == "" {
					good = len(p.Causes) == 0 && p.Verdict == diagnose.Pass
				} else {
					good = len(p.Causes) > 0 && p.Causes[0].ID == cause
				}
				if good {
					ok++
				} else if len(bad) < 4 {
					bad = append(bad, fmt.Sprintf("seed %d sev %.2f verdict %s [%s]", seed, sev, p.Verdict, causeIDs(p)))
				}
			}
			t.Logf("%-14s plan=%-5v %2d/%d  %s", cause, withPlan, ok, total, strings.Join(bad, " | "))
		}
	}
}
