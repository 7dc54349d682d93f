package main

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"os"
	"runtime"
	"runtime/debug"
	"runtime/metrics"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/line"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"github.com/schollz/progressbar/v3"
)

// defaultProfileID is the profile ports are judged against when neither --profile, a plan nor a
// port map names one: the OIF 400ZR class, the most common coherent pluggable.
const defaultProfileID = "400g-dp-16qam-cfec"

// judgeFlags are the options check, triage and report share for judging ports.
type judgeFlags struct {
	Profile  string `help:"Module profile id to judge against (see 'beatnote profiles'). Default: the map's, the plan's or the data's profile column; else triage stops, check and report assume 400g-dp-16qam-cfec and say so." placeholder:"ID"`
	Profiles string `help:"YAML file of module profiles adding to or overriding the built-in ones (by id)." type:"existingfile" placeholder:"FILE"`
	Rules    string `help:"YAML file overriding threshold rules (see docs/rules.md)." type:"existingfile" placeholder:"FILE"`
	Plan     string `help:"Link plan (YAML) the ports are judged against; enables plan vs measured and cd-mismatch." type:"existingfile" placeholder:"PLAN.yaml"`
	Strict   bool   `help:"Stop reading an input at its first rejected row and judge nothing (exit 2), instead of judging the rows that were used."`
	storeFlags
	readFlags
}

// readFlags are the reading options of every command that reads telemetry.
type readFlags struct {
	TimeFormat string `name:"time-format" help:"Read every time with this layout: strftime-like (%d.%m.%Y %H:%M) or a Go layout (02.01.2006 15:04); see docs/formats.md." placeholder:"LAYOUT"`
	DayFirst   bool   `name:"day-first" help:"Also read day-first dates: DD.MM.YYYY, DD/MM/YYYY, DD-MM-YYYY."`
	Timezone   string `help:"Zone of times written without one: an IANA name (Europe/Berlin) or an offset (+01:00). Default UTC." placeholder:"ZONE"`
	MaxRows    int    `name:"max-rows" help:"Stop with an error past this many rows in all inputs; bounds memory (docs/formats.md, Limits)." default:"10000000" placeholder:"N"`
}

// options are the parse options the flags ask for.
func (f readFlags) options() parse.Options {
	return parse.Options{TimeFormat: f.TimeFormat, DayFirst: f.DayFirst, TimeZone: f.Timezone, MaxRows: f.MaxRows}
}

// soakFlag is the test-period option of the commands that accept a circuit (check, report).
type soakFlag struct {
	Soak string `help:"Acceptance test period: 15m, 2h, 24h or 7d (ITU-T M.2110), or any duration. Default: the plan's soak, else 24h. A log shorter than it, or with fewer than 95 % of its sample slots used, gives the verdict incomplete." placeholder:"PERIOD"`
}

// acceptanceTest is what the flag asks of each port; the rejected rows are added by analyze.
func (f soakFlag) acceptanceTest() (*diagnose.AcceptanceTest, error) {
	t := &diagnose.AcceptanceTest{}
	if f.Soak != "" {
		d, err := rules.ParseTestPeriod(f.Soak)
		if err != nil {
			return nil, fmt.Errorf("--soak: %w", err)
		}
		t.Period = d
	}
	return t, nil
}

// analysis is the outcome of reading and judging inputs.
type analysis struct {
	DS     *parse.Dataset
	Result *diagnose.Result
	// ReadErr is non-nil when some input could not be read completely (exit 2 after printing).
	ReadErr error
	// Profiles and Plan are those the ports were judged with (Plan nil without --plan).
	Profiles []rules.Profile
	Plan     *rules.Plan
	// Configs are the configuration files read (--profiles, --rules, --plan), each with the
	// SHA-256 of the bytes parsed: what a signature vouches for, like DS.Inputs' digests.
	Configs []configFile
}

// configFile is a configuration file as it was read and parsed, with its role ("link plan",
// "profiles", "rules") and, for a link plan, the plan it holds.
type configFile struct {
	Role, Path, SHA256 string
	Plan               *rules.Plan
}

// readConfig reads a configuration file once (bounded, rules.ReadConfig) and keeps the digest
// of the bytes it returns, which the caller parses.
func (a *analysis) readConfig(role, path string) ([]byte, error) {
	data, err := rules.ReadConfig(path)
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	a.Configs = append(a.Configs, configFile{Role: role, Path: path, SHA256: hex.EncodeToString(sum[:])})
	return data, nil
}

// analyze reads the inputs and judges every port. mapFile is a port map (triage) or "". A port's
// profile is its map entry's, else --profile's, else the --plan's, else the one its data names
// (profileFromData), else the assumed default. With requireProfile it refuses (an error) to
// judge a port on the assumed default profile. With acc, each
// port's test period and error performance are judged too (check and report).
// Errors it returns are usage or input errors (exit 2).
func analyze(paths []string, jf judgeFlags, mapFile string, requireProfile bool, acc *diagnose.AcceptanceTest, pr *printer) (*analysis, error) {
	a, cfg, err := prepare(paths, jf, mapFile, requireProfile, acc, pr)
	if err != nil {
		return nil, err
	}
	res, err := diagnose.Analyze(a.DS, cfg)
	if err != nil {
		return nil, err
	}
	line.Reason(res, cfg.Rules)
	a.Result = res
	return a, nil
}

// prepare reads the configuration files and the inputs, says what the run will assume (notes)
// and checks that every port has a profile: everything analyze does before judging. It returns
// the analysis with DS and ReadErr set, and the Config to judge the ports with.
func prepare(paths []string, jf judgeFlags, mapFile string, requireProfile bool, acc *diagnose.AcceptanceTest, pr *printer) (*analysis, diagnose.Config, error) {
	boundHeap()
	a := &analysis{}
	cfg, pm, err := a.configure(jf, mapFile)
	if err != nil {
		return nil, cfg, err
	}
	if err := jf.checkSource(paths); err != nil {
		return nil, cfg, err
	}
	if a.Plan != nil {
		jf.storeFlags.ports = a.Plan.Ports // a store is asked for the plan's ports only
	}
	ds, readErr := readInputs(paths, jf, pr)
	if ds == nil {
		return nil, cfg, readErr
	}
	if cfg, err = a.screen(ds, readErr, cfg, pm, jf.Strict, requireProfile, acc, pr); err != nil {
		return nil, cfg, err
	}
	a.DS, a.ReadErr = ds, readErr
	tightenHeap(true)
	return a, cfg, nil
}

// configure reads --profiles, --rules, --plan and the port map and gives the Config they make,
// with the port map (nil without one).
func (a *analysis) configure(jf judgeFlags, mapFile string) (diagnose.Config, *rules.PortMap, error) {
	var cfg diagnose.Config
	profiles, err := rules.BuiltinProfiles()
	if jf.Profiles != "" {
		var data []byte
		if data, err = a.readConfig("profiles", jf.Profiles); err == nil {
			profiles, err = rules.ParseProfiles(jf.Profiles, data)
		}
	}
	if err != nil {
		return cfg, nil, err
	}
	rs, err := rules.DefaultRules()
	if jf.Rules != "" {
		var data []byte
		if data, err = a.readConfig("rules", jf.Rules); err == nil {
			rs, err = rules.ParseRules(jf.Rules, data)
		}
	}
	if err != nil {
		return cfg, nil, err
	}
	var plan *rules.Plan
	if jf.Plan != "" {
		data, err := a.readConfig("link plan", jf.Plan)
		if err != nil {
			return cfg, nil, err
		}
		p, err := rules.ParsePlan(jf.Plan, data, profiles...)
		if err != nil {
			return cfg, nil, err
		}
		plan = &p
		a.Configs[len(a.Configs)-1].Plan = plan
	}
	a.Profiles, a.Plan = profiles, plan
	var pm *rules.PortMap
	if mapFile != "" {
		data, err := a.readConfig("port map", mapFile)
		if err != nil {
			return cfg, nil, err
		}
		m, err := rules.ParsePortMap(mapFile, data, profiles...)
		if err != nil {
			return cfg, nil, err
		}
		pm = &m
	}
	// The default profile: --profile, else the plan's, else the built-in default (assumed).
	defID, defSource := jf.Profile, diagnose.ProfileFromFlag
	if defID == "" && plan != nil && plan.Profile != "" {
		defID = plan.Profile
	}
	if defID == "" {
		defID, defSource = defaultProfileID, diagnose.ProfileAssumed
	}
	defProf, err := rules.ProfileByID(profiles, defID)
	if err != nil {
		return cfg, nil, usageErrorf("--profile: %w", err)
	}
	cfg = diagnose.Config{Version: version, Rules: rs, Default: diagnose.Setup{Profile: defProf, Plan: plan, ProfileSource: defSource},
		// Nothing the commands print uses a correlation no cause asked for.
		CorrelationsOnDemand: true}
	if pm != nil {
		lk, err := a.portMapLookup(pm, profiles, jf.Profile, cfg.Default)
		if err != nil {
			return cfg, nil, err
		}
		cfg.Lookup = lk
	}

	return cfg, pm, nil
}

// screen checks what was read before anything is judged — --strict's stops, nothing usable, the
// profile of every port — and notes what was skipped, rejected and assumed; it gives cfg each
// port's profile from its data where that names it, and the acceptance test (acc, when set) the
// rejected rows.
func (a *analysis) screen(ds *parse.Dataset, readErr error, cfg diagnose.Config, pm *rules.PortMap, strict, requireProfile bool, acc *diagnose.AcceptanceTest, pr *printer) (diagnose.Config, error) {
	if err := screenRead(ds, countSamples(ds), readErr, strict, pr); err != nil {
		return cfg, err
	}
	_, rejected := rowCounts(ds)
	if acc != nil {
		acc.Rejected, acc.RejectedByPort = rejected, rejectedByPort(ds)
		cfg.Acceptance = acc
	}
	ps := a.newProfileScreen(cfg, pm)
	byColumn := map[string]diagnose.Setup{}
	for _, s := range ds.Series {
		if st := ps.add(s); st.ProfileSource == diagnose.ProfileFromColumn {
			byColumn[s.Port] = st
		}
	}
	if len(byColumn) > 0 {
		base := cfg.Lookup
		cfg.Lookup = func(port string) (diagnose.Setup, bool) {
			if st, ok := byColumn[port]; ok {
				return st, true
			}
			if base != nil {
				return base(port)
			}
			return diagnose.Setup{}, false
		}
	}
	return cfg, ps.finish(requireProfile, pr)
}

// screenRead checks what was read (ds's inputs, rejections and skipped files, samples the
// samples of its ports) before anything is judged: --strict's stops and nothing usable are
// errors; the files skipped and the rows rejected are noted.
func screenRead(ds *parse.Dataset, samples int, readErr error, strict bool, pr *printer) error {
	if strict && readErr != nil {
		// Say exactly how far each stopped input was read, and why it stopped.
		var errs []error
		for _, in := range ds.Inputs {
			if in.Error != "" {
				errs = append(errs, fmt.Errorf("--strict: nothing judged: %s: %d rows read, %d used, %d rejected: %s",
					in.File, in.RowsRead, in.RowsUsed, in.RowsRejected, in.Error))
			}
		}
		if errs == nil {
			errs = append(errs, readErr)
		}
		return errors.Join(errs...)
	}
	if samples == 0 {
		for i, r := range ds.Rejected {
			if i == 5 {
				break
			}
			pr.Errorf("%s:%d: %s", r.File, r.Line, r.Reason)
		}
		if readErr != nil {
			return readErr
		}
		return errors.New("nothing usable was read: no row was accepted (try 'beatnote scan' to see why)")
	}
	if n := len(ds.Skipped); n > 0 {
		pr.Notef("%d files in folders skipped as not telemetry, e.g. %s (%s); 'beatnote scan' lists them", n, ds.Skipped[0].File, ds.Skipped[0].Reason)
	}
	if read, rejected := rowCounts(ds); rejected > 0 {
		pr.Notef("%d of %d rows were rejected and not judged; 'beatnote scan' lists every reason", rejected, read)
	}
	return nil
}

// profileScreen places ports on their profiles one at a time (add) and then says what it had to
// assume (finish). Of the notes and errors it keeps the one of the smallest port id, the first
// in a Dataset's order, so the ports may come in any order.
type profileScreen struct {
	a        *analysis
	cfg      diagnose.Config
	pm       *rules.PortMap
	ports    int
	unmapped int
	assumed  int
	// mixed and overridden count the ports whose rows name two profiles (none chosen) or
	// another than the one they are judged on, with the note of the smallest port.
	mixed, overridden firstNote
	err               firstNote
	errValue          error
}

// firstNote counts notes and keeps the one of the smallest port.
type firstNote struct {
	n          int
	port, note string
}

func (f *firstNote) add(port, note string) {
	if f.n == 0 || port < f.port {
		f.port, f.note = port, note
	}
	f.n++
}

func (a *analysis) newProfileScreen(cfg diagnose.Config, pm *rules.PortMap) *profileScreen {
	return &profileScreen{a: a, cfg: cfg, pm: pm}
}

// add gives port s its setup: the port map's (or the default), with the profile its data names
// when nothing stronger names one (profileFromData).
func (ps *profileScreen) add(s *parse.Series) diagnose.Setup {
	ps.ports++
	st, ok := ps.cfg.Default, false
	if ps.cfg.Lookup != nil {
		if st, ok = ps.cfg.Lookup(s.Port); !ok {
			st = ps.cfg.Default
		}
	}
	if ps.pm != nil && !ok {
		ps.unmapped++
	}
	st, note, err := profileFromData(s, st, ps.a.Profiles)
	if err != nil {
		if ps.err.n == 0 || s.Port < ps.err.port {
			ps.errValue = err
		}
		ps.err.add(s.Port, "")
		return st
	}
	switch {
	case st.ProfileSource == diagnose.ProfileFromColumn:
	case len(s.Profiles) > 1 && st.ProfileSource == diagnose.ProfileAssumed:
		ps.mixed.add(s.Port, note)
	case note != "":
		ps.overridden.add(s.Port, note)
	}
	if st.ProfileSource == diagnose.ProfileAssumed {
		ps.assumed++
	}
	return st
}

// finish returns the error of the smallest port whose data names an unknown profile, or with
// requireProfile the refusal to judge ports on the assumed profile; else it notes what was
// assumed.
func (ps *profileScreen) finish(requireProfile bool, pr *printer) error {
	if ps.errValue != nil {
		return ps.errValue
	}
	defProf, plan := ps.cfg.Default.Profile, ps.a.Plan
	if ps.assumed > 0 && requireProfile {
		why := ""
		if ps.mixed.n > 0 {
			why = fmt.Sprintf("; %d of them name two profiles in their rows, e.g. %s", ps.mixed.n, ps.mixed.note)
		}
		return fmt.Errorf("%d of %d ports have no known profile (no --profile, --plan, port map entry or profile column names it%s): pass --profile ID or --map PORTMAP.yaml rather than judge them on an assumed %s", ps.assumed, ps.ports, why, defProf.ID)
	}
	if ps.unmapped > 0 {
		pr.Notef("%d of %d ports are not in the port map %s: judged against profile %s%s", ps.unmapped, ps.ports, ps.pm.File, defProf.ID,
			map[bool]string{true: " and the --plan given", false: " without a plan"}[plan != nil])
	}
	if ps.mixed.n > 0 {
		pr.Notef("%s two profiles in their rows, so the data does not say which applies, e.g. %s", words.Plural(ps.mixed.n, "port names", "ports name"), ps.mixed.note)
	}
	if ps.overridden.n > 0 {
		pr.Notef("%s judged on another profile than their data names, e.g. %s", words.Plural(ps.overridden.n, "port is", "ports are"), ps.overridden.note)
	}
	if ps.assumed > 0 {
		pr.Notef("%d of %d ports judged against the assumed default profile %s: nothing names theirs (pass --profile ID; see 'beatnote profiles')", ps.assumed, ps.ports, defProf.ID)
	}
	return nil
}

// rejectedByPort counts, for each port whose inputs are known, the rows rejected in the inputs
// its rows came from plus those rejected in inputs that gave no port a row (whose rows those
// were cannot be told).
func rejectedByPort(ds *parse.Dataset) map[string]int {
	claimed := make([]bool, len(ds.Inputs))
	for _, s := range ds.Series {
		for _, i := range s.Inputs {
			if i < len(claimed) {
				claimed[i] = true
			}
		}
	}
	unclaimed := 0
	for i, in := range ds.Inputs {
		if !claimed[i] {
			unclaimed += in.RowsRejected
		}
	}
	out := make(map[string]int, len(ds.Series))
	for _, s := range ds.Series {
		if len(s.Inputs) == 0 {
			continue
		}
		n := unclaimed
		for _, i := range s.Inputs {
			if i < len(ds.Inputs) {
				n += ds.Inputs[i].RowsRejected
			}
		}
		out[s.Port] = n
	}
	return out
}

// profileFromData gives port s the profile its telemetry names (a profile column) when nothing
// stronger placed it: st is its setup from the port map, --profile and --plan, which win over
// the data (an operator's statement over what an export says). note says why the data's profile
// was not taken: the port's rows name two profiles, or st names another. A profile id the
// profiles do not know is an error naming the file and line where the data names it.
func profileFromData(s *parse.Series, st diagnose.Setup, profiles []rules.Profile) (diagnose.Setup, string, error) {
	if len(s.Profiles) == 0 {
		return st, "", nil
	}
	first := s.Profiles[0]
	if len(s.Profiles) > 1 {
		if st.ProfileSource != diagnose.ProfileAssumed {
			return st, "", nil // the operator named it: what the rows say does not matter
		}
		second := s.Profiles[1]
		return st, fmt.Sprintf("port %q: %q (%s line %d) and %q (%s line %d)", s.Port, first.ID, first.File, first.Line, second.ID, second.File, second.Line), nil
	}
	if st.ProfileSource != diagnose.ProfileAssumed {
		if p, err := rules.ProfileByName(profiles, first.ID); err == nil && p.ID == st.Profile.ID {
			return st, "", nil
		}
		by := "--profile or --plan"
		if st.ProfileSource == diagnose.ProfileFromMap {
			by = "the port map"
		}
		return st, fmt.Sprintf("port %q: judged on %s (from %s) while %s line %d names %q", s.Port, st.Profile.ID, by, first.File, first.Line, first.ID), nil
	}
	p, err := rules.ProfileByName(profiles, first.ID)
	if err != nil {
		return st, "", fmt.Errorf("%s line %d: the profile column of port %q: %w", first.File, first.Line, s.Port, err)
	}
	st.Profile, st.ProfileSource = p, diagnose.ProfileFromColumn
	return st, "", nil
}

// gcPercent is the heap growth, in per cent of the live heap, that triggers a collection while
// inputs are read and judged (Go's default is 100).
const gcPercent = 30

// boundHeap lowers the collector's target unless the user set GOGC. The heap of a large run is
// almost all pointer-free float columns, which the collector does not scan: a collection costs a
// few milliseconds, while the default target would let the per-port scratch of the analysis
// grow the heap to twice the data. Measured on the 1M-row fleet file: peak RSS 350 MB at 100,
// 250 MB at 30, no slower (docs/performance.md).
func boundHeap() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(gcPercent)
	}
}

// judgeHeadroomBytes is the heap growth allowed for the garbage of judging once the inputs
// are read (see tightenHeap).
const judgeHeadroomBytes = 32 << 20

// tightenHeap sets the collector's target to the live heap plus judgeHeadroomBytes (between 5 %
// and 800 % of it), unless the user set GOGC: once the inputs are read (collect first says to
// measure the live heap with a collection), and after each batch of a port-by-port run (the live
// heap as the last collection found it). A large live heap is then almost all the dataset's pointer-free
// columns, which a collection does not scan, so collecting more often costs little, while a
// percentage of it would let the garbage of judging grow the process by hundreds of megabytes;
// a small one (a batch of small files) is collected every judgeHeadroomBytes of garbage rather
// than every few megabytes.
func tightenHeap(collect bool) {
	if os.Getenv("GOGC") != "" {
		return
	}
	sample := []metrics.Sample{{Name: "/gc/heap/live:bytes"}, {Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(sample)
	if collect && sample[1].Value.Uint64() > judgeHeadroomBytes {
		// A small heap (watch re-judging a short recording at every sample) needs no exact
		// figure; a large one is measured by a collection.
		runtime.GC()
		metrics.Read(sample)
	}
	live := max(sample[0].Value.Uint64(), 1)
	debug.SetGCPercent(int(min(max(100*judgeHeadroomBytes/live, 5), 800)))
}

// portMapLookup gives each mapped port its plan and profile. Plans are read once each (and
// their digests kept, as every configuration file's). The
// profile is the entry's, else --profile, else the plan's (the entry's plan, else --plan's),
// else def's; ProfileSource says which.
func (a *analysis) portMapLookup(pm *rules.PortMap, profiles []rules.Profile, flagProfile string, def diagnose.Setup) (func(string) (diagnose.Setup, bool), error) {
	plans := map[string]*rules.Plan{}
	for _, e := range pm.Entries {
		if e.PlanPath == "" {
			continue
		}
		if _, ok := plans[e.PlanPath]; ok {
			continue
		}
		data, err := a.readConfig("link plan", e.PlanPath)
		if err != nil {
			return nil, fmt.Errorf("port map %s line %d: %w", pm.File, e.Line, err)
		}
		p, err := rules.ParsePlan(e.PlanPath, data, profiles...)
		if err != nil {
			return nil, fmt.Errorf("port map %s line %d: %w", pm.File, e.Line, err)
		}
		plans[e.PlanPath] = &p
		a.Configs[len(a.Configs)-1].Plan = &p
	}
	// The entries share a few setups (plan, profile and what chose it): each entry keeps the
	// index of its own, and its line, peer and module are taken from the entry when looked up,
	// so a fleet's map does not hold a profile per port.
	type shared struct {
		plan    *rules.Plan
		id, src string
	}
	var setups []diagnose.Setup
	index := map[shared]int32{}
	of := make([]int32, len(pm.Entries))
	for i, e := range pm.Entries {
		st := def
		if e.PlanPath != "" {
			st.Plan = plans[e.PlanPath]
		}
		id, src := e.Profile, diagnose.ProfileFromMap
		if id == "" {
			id, src = flagProfile, diagnose.ProfileFromFlag
		}
		if id == "" && st.Plan != nil && st.Plan.Profile != "" {
			id, src = st.Plan.Profile, diagnose.ProfileFromFlag
			if e.PlanPath != "" {
				src = diagnose.ProfileFromMap
			}
		}
		key := shared{st.Plan, id, src}
		k, ok := index[key]
		if !ok {
			if id != "" {
				p, err := rules.ProfileByID(profiles, id)
				if err != nil {
					return nil, fmt.Errorf("port map %s line %d: %w", pm.File, e.Line, err)
				}
				st.Profile, st.ProfileSource = p, src
			}
			k = int32(len(setups))
			index[key] = k
			setups = append(setups, st)
		}
		of[i] = k
	}
	return func(port string) (diagnose.Setup, bool) {
		i, ok := pm.Index(port)
		if !ok {
			return diagnose.Setup{}, false
		}
		st, e := setups[of[i]], &pm.Entries[i]
		st.Line, st.Peer = e.FibreLine, e.Peer
		if e.PartNumber != "" || e.Serial != "" || e.Firmware != "" {
			st.Module = &diagnose.ModuleID{PartNumber: e.PartNumber, Serial: e.Serial, Firmware: e.Firmware}
		}
		return st, true
	}, nil
}

// rowCounts sums the data rows read and rejected over all inputs.
func rowCounts(ds *parse.Dataset) (read, rejected int) {
	for _, in := range ds.Inputs {
		read += in.RowsRead
		rejected += in.RowsRejected
	}
	return read, rejected
}

// readInputs reads the inputs with a progress bar on a terminal, or the store the flags name.
func readInputs(paths []string, jf judgeFlags, pr *printer) (*parse.Dataset, error) {
	if jf.active() {
		return readStore(&jf.storeFlags, jf.Strict, pr)
	}
	opt := jf.options()
	opt.Strict = jf.Strict
	return readWithProgress(paths, opt, pr)
}

// readWithProgress reads the inputs with opt, drawing a progress bar on stderr when it is a
// terminal (and not --quiet).
func readWithProgress(paths []string, opt parse.Options, pr *printer) (*parse.Dataset, error) {
	done := withProgress(&opt, pr)
	ds, err := parse.ReadPaths(paths, opt)
	done()
	if ds == nil && errors.Is(err, parse.ErrOption) {
		return nil, usageErrorf("%v", err)
	}
	return ds, err
}

// withProgress sets opt's progress reports to draw a progress bar on stderr when it is a
// terminal (and not --quiet); done finishes the bar.
func withProgress(opt *parse.Options, pr *printer) (done func()) {
	var bar *progressbar.ProgressBar
	if pr.ShowProgress() {
		opt.Progress = func(done, total int64) {
			if bar == nil {
				bar = progressbar.NewOptions64(total, progressbar.OptionSetWriter(os.Stderr),
					progressbar.OptionSetDescription("reading"), progressbar.OptionShowBytes(true),
					progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish())
			}
			_ = bar.Set64(done)
		}
	}
	return func() {
		if bar != nil {
			_ = bar.Finish()
		}
	}
}

// exitFor maps a finished analysis to the exit status of the design contract: 2 when an input
// could not be read completely, 1 when some port is marginal or failing — or could not be
// judged at all (no-data is not a pass) — else 0. allPass says whether every port passes.
func exitFor(a *analysis, allPass bool) error {
	if a.ReadErr != nil {
		return &exitError{code: 2, err: a.ReadErr}
	}
	if !allPass {
		return errNotPassing
	}
	return nil
}

// allPass reports whether every port passes.
func allPass(ports []diagnose.PortResult) bool {
	for i := range ports {
		if ports[i].Verdict != diagnose.Pass {
			return false
		}
	}
	return true
}
