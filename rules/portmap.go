package rules

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
)

// PortMap tells triage which link plan and which profile belong to each port. Its YAML file is
// a list under "ports"; see docs/rules.md.
type PortMap struct {
	// File is the path the map was read from.
	File    string         `yaml:"-" json:"file"`
	Entries []PortMapEntry `yaml:"ports" json:"ports"`

	exact map[string]int // exact port id → entry index, built by Validate
}

// PortMapEntry maps the ports matching Port to a plan and/or a profile.
type PortMapEntry struct {
	// Port is an exact port id or a glob pattern: * matches any run of characters (slashes
	// included), ? one character, [abc] / [a-z] one character of a set.
	Port string `yaml:"port" json:"port"`
	// Plan is the link plan's path as written in the file (relative to the map file).
	Plan string `yaml:"plan" json:"plan,omitempty"`
	// Profile is a profile id.
	Profile string `yaml:"profile" json:"profile,omitempty"`
	// PlanPath is Plan resolved against the map file's folder; "" when no plan is given.
	PlanPath string `yaml:"-" json:"plan_path,omitempty"`
	// Line is the line of the entry in the map file.
	Line int `yaml:"-" json:"line"`

	re *regexp.Regexp // nil for an exact port id
}

// globMeta are the characters that make a port pattern a glob.
const globMeta = "*?["

// globRegexp compiles a port glob to an anchored regular expression.
func globRegexp(pattern string) (*regexp.Regexp, error) {
	var b strings.Builder
	b.WriteString("^")
	for i := 0; i < len(pattern); i++ {
		switch c := pattern[i]; c {
		case '*':
			b.WriteString(".*")
		case '?':
			b.WriteString(".")
		case '[':
			j := strings.IndexByte(pattern[i+1:], ']')
			if j < 0 {
				return nil, fmt.Errorf("unclosed [ in %q", pattern)
			}
			set := pattern[i+1 : i+1+j]
			if set == "" {
				return nil, fmt.Errorf("empty [] in %q", pattern)
			}
			neg := strings.HasPrefix(set, "!") || strings.HasPrefix(set, "^")
			if neg {
				set = set[1:]
			}
			b.WriteString("[")
			if neg {
				b.WriteString("^")
			}
			b.WriteString(strings.NewReplacer(`\`, `\\`, `[`, `\[`).Replace(set))
			b.WriteString("]")
			i += j + 1
		default:
			b.WriteString(regexp.QuoteMeta(string(c)))
		}
	}
	b.WriteString("$")
	return regexp.Compile(b.String())
}

// Validate checks every entry: a port or pattern, a plan or a profile (or both), patterns that
// compile, no exact port given twice. Its error is a *FieldError naming the field at fault.
func (m *PortMap) Validate() error {
	seen := map[string]int{}
	m.exact = map[string]int{}
	for i := range m.Entries {
		e := &m.Entries[i]
		pre := fmt.Sprintf("ports[%d]", i)
		if strings.TrimSpace(e.Port) == "" {
			return fieldErr(pre+".port", ErrMissing, "give a port id or pattern")
		}
		if e.Plan == "" && e.Profile == "" {
			return fieldErr(pre, ErrMissing, "give a plan, a profile or both for %q", e.Port)
		}
		if j, dup := seen[e.Port]; dup {
			return fieldErr(pre+".port", ErrDuplicate, "%q is also entry %d", e.Port, j)
		}
		seen[e.Port] = i
		e.re = nil
		if strings.ContainsAny(e.Port, globMeta) {
			re, err := globRegexp(e.Port)
			if err != nil {
				return fieldErr(pre+".port", ErrRange, "bad pattern: %v", err)
			}
			e.re = re
		} else {
			m.exact[e.Port] = i
		}
	}
	return nil
}

// Lookup finds the entry for a port: an exact entry first, otherwise the first pattern in file
// order that matches.
func (m *PortMap) Lookup(port string) (PortMapEntry, bool) {
	if i, ok := m.Index(port); ok {
		return m.Entries[i], true
	}
	return PortMapEntry{}, false
}

// Index is Lookup's entry as an index into Entries. The map must have been validated.
func (m *PortMap) Index(port string) (int, bool) {
	if i, ok := m.exact[port]; ok {
		return i, true
	}
	for i := range m.Entries {
		if e := &m.Entries[i]; e.re != nil && e.re.MatchString(port) {
			return i, true
		}
	}
	return 0, false
}

// LoadPortMap reads and validates the port map at path. Profile ids are checked against
// profiles, or against the built-in profiles when none are given; plan paths are resolved
// against the map file's folder and must name readable files (the plans themselves are read by
// LoadPlan when needed).
func LoadPortMap(path string, profiles ...Profile) (PortMap, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return PortMap{}, &FileError{File: path, Err: err}
	}
	m := PortMap{File: path}
	_, ix, err := decodeStrict(path, data, &m)
	if err != nil {
		return PortMap{}, err
	}
	if len(m.Entries) == 0 {
		return PortMap{}, &FileError{File: path, Line: ix.lineOf("ports"), Field: "ports", Err: fmt.Errorf("%w: the map lists no ports", ErrMissing)}
	}
	if err := m.Validate(); err != nil {
		return PortMap{}, ix.toFileError(path, err)
	}
	if len(profiles) == 0 {
		if profiles, err = BuiltinProfiles(); err != nil {
			return PortMap{}, err
		}
	}
	dir := filepath.Dir(path)
	for i := range m.Entries {
		e := &m.Entries[i]
		pre := fmt.Sprintf("ports[%d]", i)
		e.Line = ix.lineOf(pre)
		if e.Profile != "" {
			if _, err := ProfileByID(profiles, e.Profile); err != nil {
				return PortMap{}, ix.toFileError(path, &FieldError{Field: pre + ".profile", Err: err})
			}
		}
		if e.Plan != "" {
			e.PlanPath = e.Plan
			if !filepath.IsAbs(e.Plan) {
				e.PlanPath = filepath.Join(dir, e.Plan)
			}
			if _, err := os.Stat(e.PlanPath); err != nil {
				return PortMap{}, ix.toFileError(path, &FieldError{Field: pre + ".plan", Err: fmt.Errorf("%w: cannot read plan %s", ErrMissing, e.PlanPath)})
			}
		}
	}
	return m, nil
}
