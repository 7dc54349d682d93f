package diagnose

import (
	"fmt"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// DebugScores lists every cause's evidence items and total log-odds (test helper).
func DebugScores(s *parse.Series, prof rules.Profile, plan *rules.Plan, exp *optics.LinkExpectation, r rules.Rules) []string {
	pc := newPortCtx(s, prof, plan, exp, r)
	pc.metrics()
	pc.criteria()
	im := pc.impairments()
	var out []string
	out = append(out, fmt.Sprintf("impairments: %v", im.names))
	for _, sc := range []*score{pc.signalLoss(), pc.rxPowerLow(), pc.rxOverload(), pc.cdMismatch(), pc.cdOverLimit(), pc.pmd(), pc.sopTransient(), pc.pdlHigh(), pc.loOffset(), pc.osnrLow(im), pc.nonlinear(im)} {
		if sc == nil {
			continue
		}
		out = append(out, fmt.Sprintf("%s total %.2f", sc.id, sc.total()))
		for _, it := range sc.items {
			out = append(out, fmt.Sprintf("    %+.1f %s", it.llr, it.text))
		}
	}
	return out
}
