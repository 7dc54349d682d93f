// Command beatnote turns coherent-transceiver telemetry exports into verdicts, likely causes with
// their evidence, and signed acceptance reports.
package main

import (
	"errors"
	"fmt"
	"os"

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

Exit status: 0 completed and every port passes; 1 completed and some port is marginal or failing;
2 could not complete (usage, unreadable input, nothing usable).`

func main() {
	var cli CLI
	parser, err := kong.New(&cli,
		kong.Name("beatnote"),
		kong.Description(rootHelp),
		kong.UsageOnError(),
		kong.Vars{"version": "beatnote " + version},
		kong.Exit(func(code int) {
			if code != 0 {
				code = 2
			}
			os.Exit(code)
		}),
	)
	if err != nil {
		fmt.Fprintln(os.Stderr, "beatnote:", err)
		os.Exit(2)
	}
	ctx, err := parser.Parse(os.Args[1:])
	parser.FatalIfErrorf(err)
	pr := newPrinter(os.Stdout, os.Stderr, cli.Quiet)
	ctx.Bind(&cli.Globals, pr)
	if err := ctx.Run(); err != nil {
		os.Exit(exitCode(err, pr))
	}
}

// exitCode reports err on stderr (unless it only carries a status) and maps it to an exit status.
func exitCode(err error, pr *printer) int {
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.err != nil {
			pr.Errorf("%v", ee.err)
		}
		return ee.code
	}
	pr.Errorf("%v", err)
	return 2
}
