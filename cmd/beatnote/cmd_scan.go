package main

import (
	"errors"
	"fmt"
	"os"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report"
)

// ScanCmd reads telemetry exports and says what was read and what was not.
type ScanCmd struct {
	Paths     []string `arg:"" optional:"" name:"path" help:"Files, folders (read recursively) or - for standard input (or --prometheus URL)."`
	Format    string   `help:"Output format: text or json." enum:"text,json" default:"text"`
	Export    string   `help:"Write the normalised data to FILE as canonical CSV." placeholder:"FILE.csv" type:"path"`
	Strict    bool     `help:"Stop at the first rejected row (exit 2) instead of reporting it."`
	Statistic string   `help:"Which OpenConfig statistic to read: instant, avg, min or max." enum:"instant,avg,min,max" default:"instant"`
	storeFlags
	readFlags
}

// readOptions are the parse options of the flags.
func (c *ScanCmd) readOptions() parse.Options {
	opt := c.options()
	opt.Strict, opt.Statistic = c.Strict, c.Statistic
	return opt
}

// Help is the long help of the command.
func (c *ScanCmd) Help() string {
	return `Reads canonical CSV, JSON Lines and OpenConfig-shaped JSON (plain or gzip) and lists the
files, the ports with their time span, sample interval and quantities, and every row that
was rejected with its line and reason. Formats are described in docs/formats.md.

Exit status 2 when an input cannot be read completely or nothing usable was read.`
}

// Run reads the inputs and prints the summary.
func (c *ScanCmd) Run(g *Globals, pr *printer) error {
	if err := c.checkSource(c.Paths); err != nil {
		return &exitError{code: 2, err: err}
	}
	boundHeap()
	var ds *parse.Dataset
	var readErr error
	if c.active() {
		ds, readErr = readStore(&c.storeFlags, c.Strict, pr)
	} else {
		ds, readErr = readWithProgress(c.Paths, c.readOptions(), pr)
	}
	if ds == nil {
		return &exitError{code: 2, err: readErr}
	}
	tightenHeap(true)
	ports := report.SummarizePorts(ds)
	var err error
	if c.Format == "json" {
		err = report.WriteScanJSON(pr.Out(), version, ds, ports, readErr)
	} else {
		err = report.WriteScanText(pr.Out(), ds, ports)
	}
	if err != nil {
		return err
	}
	if c.Export != "" {
		for _, in := range ds.Inputs {
			if sameFile(c.Export, in.File) {
				return &exitError{code: 2, err: fmt.Errorf("--export %s is the input %s: writing it would destroy it; choose another file", c.Export, in.File)}
			}
		}
		if err := exportCSV(c.Export, ds); err != nil {
			return &exitError{code: 2, err: err}
		}
		pr.Notef("wrote %s (%d ports)", c.Export, len(ds.Series))
	}
	switch {
	case readErr != nil:
		return &exitError{code: 2, err: readErr}
	case countSamples(ds) == 0:
		if read, _ := rowCounts(ds); read == 0 {
			return &exitError{code: 2, err: errors.New("nothing usable was read: the inputs hold no data row")}
		}
		return &exitError{code: 2, err: errors.New("nothing usable was read: no row was accepted; see the rejected rows above")}
	}
	return nil
}

func exportCSV(name string, ds *parse.Dataset) error {
	f, err := os.Create(name)
	if err != nil {
		return err
	}
	if err := parse.WriteCanonicalCSV(f, ds); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func countSamples(ds *parse.Dataset) int {
	n := 0
	for _, s := range ds.Series {
		n += s.Len()
	}
	return n
}
