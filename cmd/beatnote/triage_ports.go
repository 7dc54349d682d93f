package main

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"sort"
	"sync"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/line"
	"github.com/beatnote/beatnote/report"
)

// triagePort is what triage keeps of a judged port until the ports are ranked and written: its
// rank key and its row of the table (a few hundred bytes), and where its JSON and, on a fibre
// line, its DGD samples wait in the spill. The port's result and series are not kept.
type triagePort struct {
	key diagnose.RankKey
	row report.TriageRow
	js  spillRef
	ch  *line.Channel // on a line: what the line reasoning needs, its DGD samples in the spill
	dgd spillRef
}

// triageRun collects the judged ports of one triage.
type triageRun struct {
	json  bool // --format json: each port's JSON is kept (in the spill)
	cfg   diagnose.Config
	spill *spill

	mu  sync.Mutex
	err error // the first error of the spill
}

func newTriageRun(cfg diagnose.Config, json bool) *triageRun {
	return &triageRun{json: json, cfg: cfg, spill: newSpill()}
}

// close removes the spill.
func (t *triageRun) close() { t.spill.close() }

// portEncoders are the JSON encoders of the goroutines that judge ports.
var portEncoders = sync.Pool{New: func() any { return new(report.PortEncoder) }}

// take keeps what triage needs of a judged port; safe for concurrent use.
func (t *triageRun) take(p *diagnose.PortResult) triagePort {
	tp := triagePort{key: diagnose.RankKeyOf(p), row: report.TriageRowOf(p)}
	var err error
	if t.json {
		enc := portEncoders.Get().(*report.PortEncoder)
		var js []byte
		if js, err = enc.Encode(p); err == nil {
			tp.js, err = t.spill.put(js)
		}
		portEncoders.Put(enc)
	}
	if err == nil && line.OnLine(p) {
		tp.ch = line.NewChannel(p, t.cfg.Rules)
		if len(tp.ch.DGD) > 0 {
			b := make([]byte, 8*len(tp.ch.DGD))
			for i, v := range tp.ch.DGD {
				binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
			}
			tp.dgd, err = t.spill.put(b)
			tp.ch.DGD = nil
		}
	}
	if err != nil {
		t.mu.Lock()
		if t.err == nil {
			t.err = err
		}
		t.mu.Unlock()
	}
	return tp
}

// lines finds the line events of the ports (diagnose/line) and points each affected port's row
// at its findings.
func (t *triageRun) lines(ports []triagePort) ([]diagnose.LineResult, error) {
	if t.err != nil {
		return nil, t.err
	}
	var chans []*line.Channel
	at := map[*line.Channel]*triagePort{}
	for i := range ports {
		if c := ports[i].ch; c != nil {
			chans = append(chans, c)
			at[c] = &ports[i]
		}
	}
	if len(chans) == 0 {
		return nil, nil
	}
	var buf []byte
	lines, err := line.ReasonChannels(chans, t.cfg.Rules, func(c *line.Channel) ([]float64, error) {
		var err error
		if buf, err = t.spill.get(at[c].dgd, buf); err != nil {
			return nil, err
		}
		v := make([]float64, len(buf)/8)
		for i := range v {
			v[i] = math.Float64frombits(binary.LittleEndian.Uint64(buf[8*i:]))
		}
		return v, nil
	})
	if err != nil {
		return nil, err
	}
	refs := line.Refs(lines)
	for _, c := range chans {
		if r, ok := refs[c.Port]; ok {
			at[c].row.SetLineRefs(r)
		}
		at[c].ch = nil
	}
	return lines, nil
}

// rank orders the ports by service impact, keeps those that pass the filters, and orders them
// by --sort: the same order as diagnose.Analyze's then the filter's and --sort's on the whole
// results. ports must come in port-id order (a Dataset's).
func (c *TriageCmd) rank(ports []triagePort) []*triagePort {
	order := make([]*triagePort, len(ports))
	for i := range ports {
		order[i] = &ports[i]
	}
	sort.SliceStable(order, func(i, j int) bool { return diagnose.ImpactBefore(&order[i].key, &order[j].key) })
	kept := order[:0]
	for _, p := range order {
		if c.keep(&p.row) {
			kept = append(kept, p)
		}
	}
	switch c.Sort {
	case "margin":
		sort.SliceStable(kept, func(i, j int) bool { return diagnose.MarginBefore(&kept[i].key, &kept[j].key) })
	case "port":
		sort.SliceStable(kept, func(i, j int) bool { return kept[i].key.Port < kept[j].key.Port })
	}
	return kept
}

// write writes the ranked ports (all: filtered; the first --top of them shown) in --format.
func (c *TriageCmd) write(w io.Writer, t *triageRun, res *diagnose.Result, all []*triagePort) (shown []report.TriageRow, err error) {
	n := len(all)
	if c.Top > 0 && n > c.Top {
		n = c.Top
	}
	rows := make([]report.TriageRow, len(all))
	for i, p := range all {
		rows[i] = p.row
		rows[i].Rank = i + 1
	}
	shown = rows[:n]
	switch c.Format {
	case "json":
		var buf []byte
		err = report.WriteResultJSONPorts(w, res, n, func(i int) ([]byte, []diagnose.LineRef, error) {
			var err error
			buf, err = t.spill.get(all[i].js, buf)
			return buf, all[i].row.LineRefs, err
		})
	case "csv":
		err = report.WriteTriageCSV(w, shown)
	case "markdown":
		err = report.WriteTriageMarkdown(w, res.Lines, shown, rows)
	default:
		err = report.WriteTriageText(w, res, shown, rows)
	}
	return shown, err
}

// spill holds bytes written once and read back later, in any order: the encoded ports of a
// triage while the ranking waits for the last port. It is a temporary file, removed by close,
// so that a fleet's output is not held in memory; where no temporary file can be made it holds
// them in memory. It never holds more than the JSON the run writes plus 8 bytes per DGD sample
// of the ports on fibre lines.
type spill struct {
	mu      sync.Mutex
	f       *os.File
	w       *bufio.Writer
	size    int64
	mem     []byte
	removed bool
}

// spillRef is where one put's bytes are.
type spillRef struct{ off, n int64 }

func newSpill() *spill {
	s := &spill{}
	if f, err := os.CreateTemp("", "beatnote-triage-*"); err == nil {
		s.f, s.w = f, bufio.NewWriterSize(f, 256<<10)
		// Unlinked at once where the system allows it (the open file stays usable), so that
		// nothing is left behind even when the run is killed.
		s.removed = os.Remove(f.Name()) == nil
	}
	return s
}

// put appends b; safe for concurrent use.
func (s *spill) put(b []byte) (spillRef, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	r := spillRef{off: s.size, n: int64(len(b))}
	if s.f == nil {
		s.mem = append(s.mem, b...)
	} else if _, err := s.w.Write(b); err != nil {
		return r, fmt.Errorf("temporary file %s: %w", s.f.Name(), err)
	}
	s.size += r.n
	return r, nil
}

// get reads back what put stored at r, into buf's memory when it is large enough. Not safe for
// use concurrent with put.
func (s *spill) get(r spillRef, buf []byte) ([]byte, error) {
	if r.off < 0 || r.n < 0 || r.off+r.n > s.size {
		return nil, errors.New("spill: reference out of range")
	}
	if s.f == nil {
		return s.mem[r.off : r.off+r.n], nil
	}
	if s.w.Buffered() > 0 {
		if err := s.w.Flush(); err != nil {
			return nil, fmt.Errorf("temporary file %s: %w", s.f.Name(), err)
		}
	}
	buf = slices.Grow(buf[:0], int(r.n))[:r.n]
	if _, err := s.f.ReadAt(buf, r.off); err != nil {
		return nil, fmt.Errorf("temporary file %s: %w", s.f.Name(), err)
	}
	return buf, nil
}

// close removes the temporary file.
func (s *spill) close() {
	if s.f != nil {
		s.f.Close()
		if !s.removed {
			os.Remove(s.f.Name())
		}
		s.f = nil
	}
	s.mem = nil
}
