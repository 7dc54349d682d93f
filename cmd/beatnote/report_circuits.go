package main

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// splitByCircuit divides a judged folder of circuits into one report input per circuit: the
// ports whose link plans (from the port map) name one circuit make one report — both
// directions of it when each end has a plan of its own — judged on their plans and their own
// profile; a port with no plan is a circuit of its own. Each report goes to
// c.Out/CIRCUIT.ext, the folder made when missing.
func (c *ReportCmd) splitByCircuit(in *reportInput) ([]*reportInput, []string, error) {
	type group struct {
		name  string
		plans []*rules.Plan // the first is the report's
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
			if plan.Circuit != "" {
				key = "circuit " + plan.Circuit
			}
		}
		g := byKey[key]
		if g == nil {
			g = &group{name: name}
			byKey[key] = g
			groups = append(groups, g)
		}
		if plan != nil && !slices.Contains(g.plans, plan) {
			g.plans = append(g.plans, plan)
		}
		g.ports = append(g.ports, p)
	}
	if err := os.MkdirAll(c.Out, 0o755); err != nil {
		return nil, nil, &exitError{code: 2, err: fmt.Errorf("--by-circuit: --out %s must be a folder: %w", c.Out, err)}
	}
	ext := map[string]string{"pdf": ".pdf", "markdown": ".md", "json": ".json"}[c.Format]
	used := map[string]bool{}
	var parts []*reportInput
	var outs []string
	for _, g := range groups {
		if len(g.ports) > maxReportPorts {
			return nil, nil, &exitError{code: 2, err: fmt.Errorf("circuit %s has %d ports; an acceptance report covers at most %d", g.name, len(g.ports), maxReportPorts)}
		}
		res := *in.Result
		res.Ports = g.ports
		part := *in
		part.Result, part.Plan, part.Profile = &res, nil, nil
		if len(g.plans) > 0 {
			part.Plan = g.plans[0]
		}
		res.Directions = nil
		for _, d := range in.Result.Directions {
			if slices.ContainsFunc(d.Directions, func(dir diagnose.Direction) bool {
				return slices.ContainsFunc(g.ports, func(p diagnose.PortResult) bool { return p.Port == dir.ReceivedAt })
			}) {
				res.Directions = append(res.Directions, d)
			}
		}
		// The logs that hold the circuit's ports, and its own plan, are listed and signed; the
		// other circuits' logs and plans are not.
		own := circuitInputs(in.Dataset, g.ports, len(in.Result.Inputs))
		res.Inputs, res.Rejected = nil, []parse.Rejection{}
		files := map[string]bool{}
		for i, st := range in.Result.Inputs {
			if own[i] {
				res.Inputs = append(res.Inputs, st)
				files[st.File] = true
			}
		}
		for _, r := range in.Result.Rejected {
			if files[r.File] {
				res.Rejected = append(res.Rejected, r)
			}
		}
		other := func(path string) bool { p, ok := in.plans[path]; return ok && !slices.Contains(g.plans, p) }
		part.signed, part.Settings = nil, nil
		for i, f := range in.signed {
			if i < len(in.Result.Inputs) && !own[i] || other(f.Path) {
				continue
			}
			part.signed = append(part.signed, f)
		}
		for _, f := range in.Settings {
			if f.Role != "link plan" || !otherTyped(in, f.File, g.plans) {
				part.Settings = append(part.Settings, f)
			}
		}
		if an := g.ports[0].Analysis; an != nil {
			prof := an.Profile
			part.Profile = &prof
		} else {
			part.Profile = in.Profile
		}
		base := uniqueFileName(used, g.name)
		parts = append(parts, &part)
		outs = append(outs, filepath.Join(c.Out, base+ext))
	}
	return parts, outs, nil
}

// circuitInputs marks the inputs (indices into the n inputs read) that hold rows of the
// circuit's ports, and those that hold rows of no port at all (every row rejected, or none):
// whose those are cannot be told, so every circuit lists them. Without a record of a port's
// inputs (a dataset made elsewhere) every input is marked.
func circuitInputs(ds *parse.Dataset, ports []diagnose.PortResult, n int) []bool {
	own, anyPort := make([]bool, n), make([]bool, n)
	byPort := map[string]*parse.Series{}
	if ds != nil {
		for _, s := range ds.Series {
			byPort[s.Port] = s
			for _, i := range s.Inputs {
				if i < n {
					anyPort[i] = true
				}
			}
		}
	}
	for _, p := range ports {
		s := byPort[p.Port]
		if s == nil || len(s.Inputs) == 0 {
			for i := range own {
				own[i] = true
			}
			return own
		}
		for _, i := range s.Inputs {
			if i < n {
				own[i] = true
			}
		}
	}
	for i := range own {
		own[i] = own[i] || !anyPort[i]
	}
	return own
}

// maxFileNameBytes bounds a report file name made from a circuit id (file systems take 255).
const maxFileNameBytes = 120

// fileName makes a circuit id safe as a file name: letters, digits, '.', '-' and '_' stay,
// anything else becomes '_', and leading dots and '_' go (no hidden files, no "." or ".."); at
// most maxFileNameBytes are kept.
func fileName(id string) string {
	b := []rune(id)
	for i, r := range b {
		ok := r == '-' || r == '_' || (r == '.' && i > 0) || (r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !ok {
			b[i] = '_'
		}
	}
	s := strings.TrimLeft(string(b), "._") // never a hidden file
	s = strings.TrimRight(s[:min(len(s), maxFileNameBytes)], "_")
	if s == "" {
		s = "circuit"
	}
	return s
}

// uniqueFileName is fileName(id), with "-2", "-3"… added until it differs from every name in
// used, ignoring case (a case-insensitive file system would make "A" and "a" one file); it adds
// the name to used. Two circuits never share a report file, whatever their ids.
func uniqueFileName(used map[string]bool, id string) string {
	base := fileName(id)
	name := base
	for n := 2; used[strings.ToLower(name)]; n++ {
		name = fmt.Sprintf("%s-%d", base, n)
	}
	used[strings.ToLower(name)] = true
	return name
}

// otherTyped says whether the plan file shown as typed path holds a plan not in plans.
func otherTyped(in *reportInput, typed string, plans []*rules.Plan) bool {
	for path, p := range in.plans {
		if asTyped(path) == typed {
			return !slices.Contains(plans, p)
		}
	}
	return false
}
