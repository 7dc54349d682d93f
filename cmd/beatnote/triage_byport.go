package main

import (
	"errors"
	"sort"
	"sync/atomic"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
)

// byPortBatch is how many files the port-by-port triage reads and judges at once: enough to keep
// every core busy on small files, few enough that a batch of day-long per-port files (1,440
// rows each) takes some tens of MB. (A variable for the tests.)
var byPortBatch = 256

// byPortRuns counts the triages judged port by port, byPortParts the parts of large inputs
// they judged (for the tests).
var byPortRuns, byPortParts atomic.Int64

// errReadWhole stops a port-by-port reading that cannot give the same result as reading whole.
var errReadWhole = errors.New("the inputs are read whole")

// byPort reads and judges the inputs port by port: a batch of files at a time (parse.ReadEach),
// and a large file grouped by port a part of its ports at a time (parse.Options.PortParts), each
// batch's or part's ports judged as soon as it is read and its series dropped before the next
// is read, so that what is held between batches is only what the output needs (triageRun: a
// few hundred bytes a port, and each input's accounting). The accounting, rejections, notes,
// errors and exit status are those of reading whole: the notes and checks of prepare are made
// on the batches' joined accounting once all are read.
//
// It gives nil and no error, having printed nothing, when reading whole is needed to give the
// same result: a port's rows lie in two batches or parts (or, with --port-by-port auto, in two
// files of the first batch), an input could not be read completely (an unreadable or damaged file,
// --strict's stop, the row limit), or a link plan cannot be modelled (whose error names the
// first plan in port order).
func (c *TriageCmd) byPort(pr *printer) (*judged, error) {
	boundHeap()
	a := &analysis{}
	cfg, pm, err := a.configure(c.judgeFlags, c.Map)
	if err != nil {
		return nil, err
	}
	if err := c.checkSource(c.Paths); err != nil {
		return nil, err
	}
	t := newTriageRun(cfg, c.Format == "json")
	judge := diagnose.NewJudge(cfg)
	ps := a.newProfileScreen(cfg, pm)
	var (
		all     parse.Dataset // the joined accounting, without series
		ports   []triagePort
		seen    = map[string]struct{}{}
		samples int
		first   = true
	)
	opt := c.options()
	opt.Strict = c.Strict
	opt.PortParts = true
	done := withProgress(&opt, pr)
	err = parse.ReadEach(c.Paths, opt, byPortBatch, func(ds *parse.Dataset, readErr error) error {
		if readErr != nil {
			return errReadWhole
		}
		setups := make([]diagnose.Setup, len(ds.Series))
		for i, s := range ds.Series {
			if _, dup := seen[s.Port]; dup || (first && c.PortByPort == "auto" && len(s.Inputs) > 1) {
				return errReadWhole
			}
			seen[s.Port] = struct{}{}
			samples += s.Len()
			setups[i] = ps.add(s)
		}
		first = false
		if ds.Continued { // a part of a large input
			byPortParts.Add(1)
		}
		all.JoinAccounting(ds)
		from := len(ports)
		ports = append(ports, make([]triagePort, len(ds.Series))...)
		err := judge.Each(ds.Series, setups, func(i int, p *diagnose.PortResult) { ports[from+i] = t.take(p) })
		if err != nil {
			return errReadWhole
		}
		tightenHeap(false)
		return nil
	})
	done()
	if err != nil {
		t.close()
		switch {
		case errors.Is(err, errReadWhole), errors.Is(err, parse.ErrNotGrouped):
			return nil, nil
		case errors.Is(err, parse.ErrOption):
			return nil, usageErrorf("%v", err)
		}
		return nil, err
	}
	if err := screenRead(&all, samples, nil, c.Strict, pr); err != nil {
		t.close()
		return nil, err
	}
	if err := ps.finish(true, pr); err != nil {
		t.close()
		return nil, err
	}
	// A Dataset's order: by port id.
	sort.Slice(ports, func(i, j int) bool { return ports[i].key.Port < ports[j].key.Port })
	byPortRuns.Add(1)
	return &judged{a: a, t: t, ports: ports, res: diagnose.NewResult(&all, cfg.Version)}, nil
}
