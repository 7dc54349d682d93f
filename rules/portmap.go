package rules

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"
)

// PortMap tells triage which link plan and which profile belong to each port, and the topology
// around it: the fibre line it shares with other channels, the port of the other direction of
// its circuit, and the module's identity. Its YAML file is a list under "ports"; see
// docs/rules.md.
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
	// FibreLine names the shared fibre line (or multiplex section) the port's channel travels:
	// channels with the same FibreLine see the same spans and amplifiers, in the same direction.
	FibreLine string `yaml:"line" json:"fibre_line,omitempty"`
	// Peer is the exact port id of the other direction of the circuit: the port at the far end,
	// whose receiver hears what this port's module transmits (this port receives the far end's).
	Peer string `yaml:"peer" json:"peer,omitempty"`
	// PartNumber, Serial and Firmware identify the module (as its inventory states them).
	PartNumber string `yaml:"part_number" json:"part_number,omitempty"`
	Serial     string `yaml:"serial" json:"serial,omitempty"`
	Firmware   string `yaml:"firmware" json:"firmware,omitempty"`
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

// maxNameLen bounds the free-text fields of an entry (line, peer, module identity).
const maxNameLen = 128

// checkName checks a free-text field: printable, one line, at most maxNameLen bytes.
func checkName(field, v string) error {
	if len(v) > maxNameLen {
		return fieldErr(field, ErrRange, "%d bytes; at most %d", len(v), maxNameLen)
	}
	for _, r := range v {
		if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) || r == utf8.RuneError {
			return fieldErr(field, ErrRange, "control or invalid character %U", r)
		}
	}
	if v != "" && strings.TrimSpace(v) == "" {
		return fieldErr(field, ErrMissing, "only spaces")
	}
	return nil
}

// Validate checks every entry: a port or pattern, a plan, a profile or a line (or several),
// patterns that compile, no exact port given twice, printable names, and peers that are exact
// ports other than the entry's own and, when both are listed, point back at each other. Its
// error is a *FieldError naming the field at fault.
func (m *PortMap) Validate() error {
	seen := make(map[string]int, len(m.Entries))
	m.exact = make(map[string]int, len(m.Entries))
	for i := range m.Entries {
		e := &m.Entries[i]
		pre := "ports[" + strconv.Itoa(i) + "]"
		if strings.TrimSpace(e.Port) == "" {
			return fieldErr(pre+".port", ErrMissing, "give a port id or pattern")
		}
		if e.Plan == "" && e.Profile == "" && e.FibreLine == "" && e.Peer == "" {
			return fieldErr(pre, ErrMissing, "give a plan, a profile, a line or a peer for %q", e.Port)
		}
		for _, f := range []struct{ name, v string }{{"port", e.Port}, {"line", e.FibreLine}, {"peer", e.Peer},
			{"part_number", e.PartNumber}, {"serial", e.Serial}, {"firmware", e.Firmware}} {
			if err := checkName(pre+"."+f.name, f.v); err != nil {
				return err
			}
		}
		if e.Peer != "" {
			switch {
			case strings.ContainsAny(e.Port, globMeta):
				return fieldErr(pre+".peer", ErrRange, "a pattern (%q) cannot have one peer: give the peer on each exact port", e.Port)
			case strings.ContainsAny(e.Peer, globMeta):
				return fieldErr(pre+".peer", ErrRange, "%q: the peer is one exact port id, not a pattern", e.Peer)
			case e.Peer == e.Port:
				return fieldErr(pre+".peer", ErrRange, "%q is the port itself", e.Peer)
			}
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
	for i := range m.Entries {
		e := &m.Entries[i]
		if e.Peer == "" {
			continue
		}
		if j, ok := m.exact[e.Peer]; ok && m.Entries[j].Peer != "" && m.Entries[j].Peer != e.Port {
			return fieldErr(fmt.Sprintf("ports[%d].peer", i), ErrRange, "%q names %q as its peer, but %q names %q", e.Port, e.Peer, e.Peer, m.Entries[j].Peer)
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
	if i, ok := m.exact[port]; ok && i < len(m.Entries) && m.Entries[i].Port == port {
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
	data, err := ReadConfig(path)
	if err != nil {
		return PortMap{}, err
	}
	return ParsePortMap(path, data, profiles...)
}

// ParsePortMap is LoadPortMap for a port map already read from path.
func ParsePortMap(path string, data []byte, profiles ...Profile) (PortMap, error) {
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
		pre := "ports[" + strconv.Itoa(i) + "]"
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
