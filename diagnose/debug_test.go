package diagnose_test

import (
	"encoding/json"
	"os"
	"strconv"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/samples/synth"
)

func TestDebugOne(t *testing.T) {
	cause := os.Getenv("DBG_CAUSE")
	if os.Getenv("DBG") == "" {
		t.Skip()
	}
	seed, _ := strconv.Atoi(os.Getenv("DBG_SEED"))
	sev, _ := strconv.ParseFloat(os.Getenv("DBG_SEV"), 64)
	spec := synth.Spec{Seed: int64(seed), Severity: sev, ProfileID: os.Getenv("DBG_PROFILE")}
	if cause != "" {
		spec.Causes = []string{cause}
	}
	c, _ := synth.Make(spec)
	p := judge(t, c, mustRules(t), os.Getenv("DBG_NOPLAN") == "")
	p.Metrics = nil
	b, _ := json.MarshalIndent(p, "", " ")
	ex, _ := optics.ExpectLink(c.Plan, c.Profile)
	t.Logf("exp opt=%v gsnr=%v gosnr=%v ase=%v nli=%v total=%v", ex.OptimumLaunchPowerDBm, ex.GSNRdB, ex.GOSNRdB, ex.ASEOSNRdB, ex.NLISNRdB, ex.TotalSNRdB)
	plan := c.Plan
	for _, l := range diagnose.DebugScores(c.Series, c.Profile, &plan, &ex, mustRules(t)) {
		t.Log(l)
	}
	t.Logf("%s\nnotes %v\ndesign %+v\nactual %+v", b, c.Notes, c.Design, c.Actual)
}
