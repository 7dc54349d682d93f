package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/rules"
)

// splitByCircuit divides a judged folder of circuits into one report input per circuit: the
// ports that share a link plan (from the port map) make one circuit, judged on that plan and
// their own profile; a port with no plan is a circuit of its own. Each report goes to
// c.Out/CIRCUIT.ext, the folder made when missing.
func (c *ReportCmd) splitByCircuit(in *reportInput) ([]*reportInput, []string, error) {
	type group struct {
		name  string
		plan  *rules.Plan
		ports []diagnose.PortResult
	}
	var groups []*group
	byKey := map[any]*group{}
	for _, p := range in.Result.Ports {
		var key any = "port " + p.Port
		name := p.Port
		var plan *rules.Plan
		if p.Analysis != nil && p.Analysis.Plan != nil {
			plan = p.Analysis.Plan
			key, name = plan, plan.Circuit
		}
		g := byKey[key]
		if g == nil {
			g = &group{name: name, plan: plan}
			byKey[key] = g
			groups = append(groups, g)
		}
		g.ports = append(g.ports, p)
	}
	if err := os.MkdirAll(c.Out, 0o755); err != nil {
		return nil, nil, &exitError{code: 2, err: fmt.Errorf("--by-circuit: --out %s must be a folder: %w", c.Out, err)}
	}
	ext := map[string]string{"pdf": ".pdf", "markdown": ".md", "json": ".json"}[c.Format]
	used := map[string]int{}
	var parts []*reportInput
	var outs []string
	for _, g := range groups {
		if len(g.ports) > maxReportPorts {
			return nil, nil, &exitError{code: 2, err: fmt.Errorf("circuit %s has %d ports; an acceptance report covers at most %d", g.name, len(g.ports), maxReportPorts)}
		}
		res := *in.Result
		res.Ports = g.ports
		part := *in
		part.Result, part.Plan, part.Profile = &res, g.plan, nil
		// The circuit's own plan is listed and signed; the other circuits' plans are not.
		other := func(path string) bool { p, ok := in.plans[path]; return ok && p != g.plan }
		part.signed, part.Settings = nil, nil
		for _, f := range in.signed {
			if !other(f.Path) {
				part.signed = append(part.signed, f)
			}
		}
		for _, f := range in.Settings {
			if f.Role != "link plan" || !otherTyped(in, f.File, g.plan) {
				part.Settings = append(part.Settings, f)
			}
		}
		if an := g.ports[0].Analysis; an != nil {
			prof := an.Profile
			part.Profile = &prof
		} else {
			part.Profile = in.Profile
		}
		base := fileName(g.name)
		used[base]++
		if n := used[base]; n > 1 {
			base = fmt.Sprintf("%s-%d", base, n)
		}
		parts = append(parts, &part)
		outs = append(outs, filepath.Join(c.Out, base+ext))
	}
	return parts, outs, nil
}

// fileName makes a circuit id safe as a file name: letters, digits, '.', '-' and '_' stay,
// anything else becomes '_' (a leading dot too, so no hidden files).
func fileName(id string) string {
	b := []rune(id)
	for i, r := range b {
		ok := r == '-' || r == '_' || (r == '.' && i > 0) || (r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !ok {
			b[i] = '_'
		}
	}
	s := strings.Trim(string(b), "_")
	if s == "" {
		s = "circuit"
	}
	return s
}

// otherTyped says whether the plan file shown as typed path holds another plan than plan.
func otherTyped(in *reportInput, typed string, plan *rules.Plan) bool {
	for path, p := range in.plans {
		if asTyped(path) == typed {
			return p != plan
		}
	}
	return false
}
