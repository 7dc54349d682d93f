package main

import (
	"fmt"
	"io"
	"os"

	"golang.org/x/term"
)

// printer is the one way commands talk to the user: results to stdout, notes and errors to
// stderr. Quiet silences notes and progress, never results or errors.
type printer struct {
	out, errw io.Writer
	quiet     bool
}

func newPrinter(out, errw io.Writer, quiet bool) *printer {
	return &printer{out: out, errw: errw, quiet: quiet}
}

// Out is where results go.
func (p *printer) Out() io.Writer { return p.out }

// Printf writes a result line to stdout.
func (p *printer) Printf(format string, a ...any) { fmt.Fprintf(p.out, format, a...) }

// Notef writes a note to stderr unless quiet.
func (p *printer) Notef(format string, a ...any) {
	if !p.quiet {
		fmt.Fprintf(p.errw, format+"\n", a...)
	}
}

// Errorf writes an error to stderr.
func (p *printer) Errorf(format string, a ...any) {
	fmt.Fprintf(p.errw, "beatnote: "+format+"\n", a...)
}

// ShowProgress reports whether a progress bar belongs on stderr: not quiet, and stderr a terminal.
func (p *printer) ShowProgress() bool {
	if p.quiet {
		return false
	}
	f, ok := p.errw.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}
