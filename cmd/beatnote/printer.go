package main

import (
	"fmt"
	"io"
	"os"

	"github.com/beatnote/beatnote/report/escape"
	"golang.org/x/term"
)

// printer is the one way commands talk to the user: results to stdout, notes and errors to
// stderr. Quiet silences notes and progress, never results or errors.
//
// Every string, error and Stringer argument is passed through escape.Visible: a file name, a
// port name or an input value quoted in a message cannot move the cursor, start a new line or
// reorder the text. The format strings are the program's own and keep their line ends.
type printer struct {
	out, errw io.Writer
	quiet     bool
}

func newPrinter(out, errw io.Writer, quiet bool) *printer {
	return &printer{out: out, errw: errw, quiet: quiet}
}

// Out is where results go. Writers given it escape what came from files themselves.
func (p *printer) Out() io.Writer { return p.out }

// Printf writes a result line to stdout.
func (p *printer) Printf(format string, a ...any) { fmt.Fprintf(p.out, format, visibleArgs(a)...) }

// Notef writes a note to stderr unless quiet.
func (p *printer) Notef(format string, a ...any) {
	if !p.quiet {
		fmt.Fprintf(p.errw, format+"\n", visibleArgs(a)...)
	}
}

// Errorf writes an error to stderr.
func (p *printer) Errorf(format string, a ...any) {
	fmt.Fprintf(p.errw, "beatnote: "+format+"\n", visibleArgs(a)...)
}

// Error writes err to stderr, one line per error it joins (errors.Join), each escaped.
func (p *printer) Error(err error) {
	if joined, ok := err.(interface{ Unwrap() []error }); ok {
		for _, e := range joined.Unwrap() {
			p.Error(e)
		}
		return
	}
	p.Errorf("%v", err)
}

// visibleArgs returns a with its strings, errors and Stringers escaped for a terminal.
func visibleArgs(a []any) []any {
	out := make([]any, len(a))
	for i, x := range a {
		switch v := x.(type) {
		case string:
			out[i] = escape.Visible(v)
		case error:
			out[i] = escape.Visible(v.Error())
		case fmt.Stringer:
			out[i] = escape.Visible(v.String())
		default:
			out[i] = x
		}
	}
	return out
}

// ShowProgress reports whether a progress bar belongs on stderr: not quiet, and stderr a terminal.
func (p *printer) ShowProgress() bool {
	if p.quiet {
		return false
	}
	f, ok := p.errw.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}
