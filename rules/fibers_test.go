package rules_test

import (
	"testing"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
)

// Every fibre name a plan may use must be one the physics models resolve, or a plan that
// validates here would fail later in diagnose/optics.
func TestFiberNamesKnownToOptics(t *testing.T) {
	names := append([]string{}, rules.FiberTypes...)
	names = append(names, "", "G.652.D", "smf", "g655e", "NZDSF", "g654")
	for _, name := range names {
		if !rules.KnownFiber(name) {
			t.Errorf("rules.KnownFiber(%q) = false", name)
			continue
		}
		if name == "custom" {
			continue // resolved from the span's own figures
		}
		if _, err := optics.FiberByName(name); err != nil {
			t.Errorf("rules accepts fibre %q but optics does not: %v", name, err)
		}
	}
	for _, name := range []string{"g999", "multimode", "g.657"} {
		if rules.KnownFiber(name) {
			t.Errorf("rules.KnownFiber(%q) = true", name)
		}
	}
}
