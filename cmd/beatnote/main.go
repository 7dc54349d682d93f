// Command beatnote turns coherent-transceiver telemetry exports into verdicts, likely causes with
// their evidence, and signed acceptance reports.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/alecthomas/kong"
)

// version is set at build time with -ldflags "-X main.version=…".
var version = "0.1.0-dev"

// Globals are the options every command shares.
type Globals struct {
	Quiet   bool             `short:"q" help:"Print results only: no progress and no notes on stderr."`
	Version kong.VersionFlag `help:"Print the version and exit."`
}

// CLI is the command line.
type CLI struct {
	Globals

	Scan     ScanCmd     `cmd:"" help:"Read telemetry exports and account for every row."`
	Check    CheckCmd    `cmd:"" help:"Judge one circuit at turn-up or acceptance."`
	Triage   TriageCmd   `cmd:"" help:"Rank many ports worst first, each with its likely cause."`
	Report   ReportCmd   `cmd:"" help:"Write an acceptance report (PDF, Markdown or JSON), optionally signed."`
	Watch    WatchCmd    `cmd:"" help:"Follow a module live over gNMI at turn-up: judge and record as samples arrive."`
	Verify   VerifyCmd   `cmd:"" help:"Check a signed report against its signature and inputs."`
	Keygen   KeygenCmd   `cmd:"" help:"Create an Ed25519 key pair for signing reports."`
	Calc     CalcCmd     `cmd:"" help:"Field calculator for the link physics."`
	Profiles ProfilesCmd `cmd:"" help:"List the module profiles and their figures with sources."`
}

// exitError carries an exit status: 1 for "completed, something is not passing", 2 for "could
// not complete".
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string {
	if e.err == nil {
		return fmt.Sprintf("exit status %d", e.code)
	}
	return e.err.Error()
}
func (e *exitError) Unwrap() error { return e.err }

// errNotPassing is returned by check and triage when some port is marginal or failing (exit 1).
var errNotPassing = &exitError{code: 1}

const rootHelp = `beatnote reads the telemetry a coherent transceiver's DSP exports (pre-FEC BER, Q, eSNR, OSNR,
CD, DGD, PDL, SOP rate, LO offset, powers), judges it against the module's limits and the link's
plan, names the likely physical cause with its evidence, and writes signed acceptance reports.

Exit status: 0 completed and every port passes; 1 completed and some port is marginal, failing or incomplete;
2 could not complete (usage, unreadable input, nothing usable).`

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr, os.Exit))
}

// run parses args, runs the command and returns the exit status. exit is what --help and
// --version call to end the program (os.Exit in main).
func run(args []string, stdout, stderr io.Writer, exit func(int)) int {
	var cli CLI
	exited := -1
	parser, err := kong.New(&cli,
		kong.Name("beatnote"),
		kong.Description(rootHelp),
		kong.Vars{"version": "beatnote " + version},
		kong.Writers(stdout, stderr),
		kong.Exit(func(code int) {
			exited = code
			exit(code)
		}),
	)
	pr := newPrinter(stdout, stderr, false)
	if err != nil {
		pr.Errorf("%v", err)
		return 2
	}
	ctx, err := parser.Parse(args)
	if exited >= 0 { // --help or --version, with an exit func that returned
		return exited
	}
	if err != nil {
		// A usage error is one line on stderr and nothing on stdout, so that output redirected
		// to a file never holds help text.
		command := ""
		var pe *kong.ParseError
		if errors.As(err, &pe) && pe.Context != nil {
			command = pe.Context.Command()
		}
		pr.Errorf("%v; %s", err, seeHelp(command))
		return 2
	}
	pr.quiet = cli.Quiet
	ctx.Bind(&cli.Globals, pr)
	if err := ctx.Run(); err != nil {
		return exitCode(err, pr, ctx.Command())
	}
	return 0
}

// seeHelp is the hint that ends a usage error.
func seeHelp(command string) string {
	// kong writes positional arguments into the command path ("check <log>"): keep the words.
	var words []string
	for _, w := range strings.Fields(command) {
		if !strings.HasPrefix(w, "<") {
			words = append(words, w)
		}
	}
	return "see '" + strings.Join(append([]string{"beatnote"}, append(words, "--help")...), " ") + "'"
}

// usageError is a wrong option or combination of options found by a command's own checks:
// reported like kong's usage errors, with the hint to --help, exit status 2.
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

// usageErrorf makes a usage error (exit status 2).
func usageErrorf(format string, a ...any) error {
	return &exitError{code: 2, err: &usageError{fmt.Errorf(format, a...)}}
}

// exitCode reports err on stderr (unless it only carries a status) and maps it to an exit
// status. command is the command that ran, for the hint of a usage error.
func exitCode(err error, pr *printer, command string) int {
	code := 2
	var ee *exitError
	if errors.As(err, &ee) {
		code, err = ee.code, ee.err
	}
	var ue *usageError
	switch {
	case err == nil:
	case errors.As(err, &ue):
		pr.Errorf("%v; %s", ue.err, seeHelp(command))
	default:
		pr.Error(err)
	}
	return code
}
