package parse

import (
	"fmt"
	"unicode"
	"unicode/utf8"
)

// A profile column (CSV) or field (JSON Lines) names the module profile of the row's port — a
// profile id of the rules package, which this package does not check: the commands that judge
// ports resolve it against the profiles they use. A port's rows should all name the same one;
// Series.Profiles keeps the first two distinct names met, so that a port whose rows disagree
// is known as such (see docs/formats.md, "Module profile column").

// maxProfileNameBytes bounds a profile name: ids are short words ("400g-dp-16qam-cfec"); a
// longer field is not a profile name.
const maxProfileNameBytes = 64

// ProfileMention is a module profile named by a port's telemetry and where it was first named.
type ProfileMention struct {
	ID   string `json:"id"`
	File string `json:"file"`
	Line int    `json:"line"`
}

// Profile returns the profile id the port's rows name, or "" when none names one or when they
// name different ones (then Profiles holds two).
func (s *Series) Profile() string {
	if len(s.Profiles) == 1 {
		return s.Profiles[0].ID
	}
	return ""
}

// checkProfileName says why b (trimmed, not missing) cannot be a profile name: not UTF-8, a
// control character, or longer than maxProfileNameBytes.
func checkProfileName(b []byte) error {
	if len(b) > maxProfileNameBytes {
		return fmt.Errorf("%w: profile name %s is longer than %d bytes", ErrImpossible, quoteShort(b), maxProfileNameBytes)
	}
	if !utf8.Valid(b) {
		return fmt.Errorf("%w: profile name %s", ErrEncoding, quoteShort(b))
	}
	for _, r := range string(b) {
		if unicode.IsControl(r) {
			return fmt.Errorf("%w: profile name %s holds a control character", ErrEncoding, quoteShort(b))
		}
	}
	return nil
}

// profileMark records that an accepted row of a block (at line) names profile id for the
// block's port number port, and that the port's previous row in the block named another one
// (or none).
type profileMark struct {
	port int32
	line int
	id   string
}

// markProfile notes that the accepted row at line, of the block's port pi, names profile b.
// Only changes are kept: a port whose rows all name one profile costs one mark per block.
func (job *csvJob) markProfile(pi int32, b []byte, line int) {
	for len(job.profLast) <= int(pi) {
		job.profLast = append(job.profLast, "")
	}
	if job.profLast[pi] == string(b) {
		return
	}
	id := string(b)
	job.profLast[pi] = id
	job.profMarks = append(job.profMarks, profileMark{port: pi, line: line, id: id})
}

// takeProfiles adds the profile marks of a block whose rows were taken (in input order).
func (res *fileResult) takeProfiles(job *csvJob) {
	for _, m := range job.profMarks {
		if res.profiles == nil {
			res.profiles = map[string][]ProfileMention{}
		}
		addMention(res.profiles, job.names[m.port], ProfileMention{ID: m.id, File: res.stats.File, Line: m.line})
	}
}

// addMention adds m to port's mentions unless its id is there already or two are kept.
func addMention(byPort map[string][]ProfileMention, port string, m ProfileMention) {
	list := byPort[port]
	if len(list) >= 2 || len(list) == 1 && list[0].ID == m.ID {
		return
	}
	byPort[port] = append(list, m)
}

// attachProfiles gives each series the profiles its rows name, over the inputs in order.
func attachProfiles(series []*Series, results []*fileResult) {
	var all map[string][]ProfileMention
	for _, res := range results {
		if len(res.profiles) == 0 {
			continue
		}
		if all == nil {
			all = res.profiles
			continue
		}
		for port, ms := range res.profiles {
			for _, m := range ms {
				addMention(all, port, m)
			}
		}
	}
	if all == nil {
		return
	}
	for _, s := range series {
		s.Profiles = all[s.Port]
	}
}
