// Package synth makes synthetic coherent-transceiver telemetry for one port, deterministically,
// from the physics: a link plan is drawn from the seed, the link as built is the plan plus the
// injected faults, and every reported quantity follows from that link through the models of
// diagnose/optics (ASE OSNR of an amplifier chain, GN-model nonlinear interference, OSNR ↔ SNR,
// exact Gray-coded BER(SNR), Q from BER, fibre dispersion, Maxwellian DGD).
//
// What synth adds to those models is documented where it is used: a transceiver back-to-back SNR
// ceiling, a receiver electrical-noise floor, and simple penalty models for PDL, DGD, CD beyond
// the compensator, receiver overload, carrier offset near the capture edge and fast SOP changes.
// They are modelling choices of ours, marked as such; they make faults look physically
// consistent, they are not claims about any real module.
//
// The same Spec always gives the same Case, byte for byte (math/rand/v2 PCG seeded from Spec.Seed).
package synth

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"sync"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Spec says what port to make. The zero values of the optional fields give a day-long,
// one-minute healthy 400G DP-16QAM (OIF 400ZR class) port.
type Spec struct {
	// Causes are the cause ids (diagnose.Cause…) to inject, the intended top cause first.
	// Empty means a healthy link.
	Causes []diagnose.CauseID
	// Severity runs from 0 (mild but detectable) to 1 (severe).
	Severity float64
	// Seed makes the plan, the fault details and every noise sample.
	Seed int64
	// ProfileID is a built-in profile id (rules.BuiltinProfiles); default DefaultProfileID.
	ProfileID string
	// Profile, when not nil, is used instead of looking ProfileID up.
	Profile *rules.Profile
	// Samples is the number of sample times (default 1440).
	Samples int
	// Interval between samples (default one minute).
	Interval time.Duration
	// Start is the first sample time (default DefaultStart).
	Start time.Time
	// Port is the port id (default "port-1").
	Port string
	// Circuit is the circuit id written into the plan (default "circuit-1").
	Circuit string
	// EndA and EndZ name the sites at the two ends (defaults "site-a", "site-z").
	EndA, EndZ string
	// Plan, when not nil, is the link plan to use instead of drawing one from the seed. Its
	// spans must be on fibre types optics.FiberByName knows.
	Plan *rules.Plan
	// SignalLossAsGap makes signal-loss report the power floor (BER 0.5) only for the first fifth
	// of the dark time and then leave the samples out (a port that reports the light going and
	// then stops reporting), instead of reporting the whole dark time at the floor.
	SignalLossAsGap bool
	// LineEvents happen on the fibre line the channel travels (see LineEvent); give every
	// channel of a line the same events and the same Plan (each with its own frequency).
	LineEvents []LineEvent
}

// DefaultProfileID is the profile used when Spec.ProfileID is empty.
const DefaultProfileID = "400g-dp-16qam-cfec"

// DefaultStart is the first sample time when Spec.Start is zero.
var DefaultStart = time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)

// Case is one synthetic port: the plan it was built to, the link as built, its telemetry and
// what a correct diagnosis should say about it.
type Case struct {
	Spec    Spec
	Profile rules.Profile
	Plan    rules.Plan
	// Design is the link the plan describes; Actual is the link as built (plan + faults).
	Design, Actual Link
	Series         *parse.Series
	// Verdict is the verdict the data supports against the profile's limits: pass for a
	// healthy link, fail when a module limit is crossed (BER above the FEC threshold,
	// uncorrected blocks, OSNR below the required OSNR, power outside the receiver window,
	// CD/DGD/PDL/SOP/offset beyond tolerance, light lost), marginal otherwise. A rule set may judge a marginal case as fail; never as pass.
	Verdict diagnose.Verdict
	// Causes are the intended causes, top first (Spec.Causes, de-duplicated).
	Causes []diagnose.CauseID
	// Notes describe what was injected, one sentence each with numbers and units.
	Notes []string
}

// Link holds the figures of a link, designed or as built.
type Link struct {
	RouteKm          float64 `json:"route_km"`
	CDPsNm           float64 `json:"cd_ps_nm"`
	MeanDGDPs        float64 `json:"mean_dgd_ps"`
	RxPowerDBm       float64 `json:"rx_power_dbm"`
	TxPowerDBm       float64 `json:"tx_power_dbm"`
	LaunchPowerDBm   float64 `json:"launch_power_dbm"`
	OptimumLaunchDBm float64 `json:"optimum_launch_dbm"`
	// OSNRdB is the ASE-limited OSNR in 0.1 nm at the receiver.
	OSNRdB float64 `json:"osnr_db"`
	// NLISNRdB is the SNR (in the signal bandwidth) set by nonlinear interference alone.
	NLISNRdB float64 `json:"nli_snr_db"`
	// B2BSNRdB is the transceiver's back-to-back SNR ceiling.
	B2BSNRdB float64 `json:"b2b_snr_db"`
	// ESNRdB is the electrical SNR expected before time-varying penalties.
	ESNRdB float64 `json:"esnr_db"`
	// PDLdB is the mean PDL of the line.
	PDLdB        float64 `json:"pdl_db"`
	FrequencyTHz float64 `json:"frequency_thz"`
}

// AllCauses lists every cause id synth can inject, in the order of the design contract.
var AllCauses = []diagnose.CauseID{
	diagnose.CauseOSNRLow, diagnose.CauseRxPowerLow, diagnose.CauseRxOverload,
	diagnose.CauseCDMismatch, diagnose.CauseCDOverLimit, diagnose.CausePMD,
	diagnose.CauseSOPTransient, diagnose.CausePDLHigh, diagnose.CauseLOOffset,
	diagnose.CauseNonlinear, diagnose.CauseSignalLoss,
}

// MoreCauses lists the causes synth injects beyond AllCauses (kept apart so that generators
// drawing from AllCauses keep their output): tx-power, transceiver, filtering,
// frequency-mismatch.
var MoreCauses = []diagnose.CauseID{diagnose.CauseTxPower, diagnose.CauseTransceiver, diagnose.CauseFiltering, diagnose.CauseFrequencyMismatch}

// ErrSpec marks a Spec that cannot be made.
var ErrSpec = errors.New("synth: bad spec")

// Make builds the port that spec describes. The same spec always gives the same case.
func Make(spec Spec) (Case, error) {
	spec, err := withDefaults(spec)
	if err != nil {
		return Case{}, err
	}
	prof := *spec.Profile
	mod, err := optics.ParseModulation(prof.Modulation)
	if err != nil {
		return Case{}, fmt.Errorf("%w: profile %s: %v", ErrSpec, prof.ID, err)
	}
	// Separate streams for the plan, the fault details and the noise, so that the same seed
	// with and without a fault shares its plan and its noise.
	stream := func(k uint64) *rand.Rand { return rand.New(rand.NewPCG(uint64(spec.Seed), 0x62656174+k)) }
	planRNG, faultRNG, noiseRNG := stream(1), stream(2), stream(3)
	has := func(c diagnose.CauseID) bool { return slices.Contains(spec.Causes, c) }

	var plan rules.Plan
	if spec.Plan != nil {
		plan = *spec.Plan
	} else {
		plan, err = drawPlan(planRNG, spec, prof, has(diagnose.CauseCDOverLimit))
		if err != nil {
			return Case{}, err
		}
	}
	m, err := newLinkModel(plan, prof)
	if err != nil {
		return Case{}, err
	}
	design := m.evaluate(prof)
	c := Case{Spec: spec, Profile: prof, Plan: plan, Design: design}
	for _, cause := range spec.Causes {
		if !slices.Contains(c.Causes, cause) {
			c.Causes = append(c.Causes, cause)
		}
	}
	f := faults{sev: spec.Severity, rng: faultRNG}
	if err := f.apply(&m, &c, prof); err != nil {
		return Case{}, err
	}
	c.Actual = m.evaluate(prof)
	c.Actual.PDLdB = f.pdlDB
	c.Design.PDLdB = basePDLdB
	lw, err := prepareLineEvents(spec, m, prof, &f, &c)
	if err != nil {
		return Case{}, err
	}
	if f.txStepAt >= 0 {
		// The link as it stands after the transmitter stepped down (tx-power).
		mm := m
		mm.txDBm -= f.txStepDB
		after := mm.evaluate(prof)
		after.PDLdB = f.pdlDB
		lw = append(lw, lineWindow{from: int(f.txStepAt * float64(spec.Samples-1)), to: spec.Samples - 1, link: &after})
	}
	c.Series, c.Verdict = render(noiseRNG, spec, prof, mod, c.Actual, &f, lw)
	if len(c.Causes) == 0 && len(spec.LineEvents) == 0 && c.Verdict == diagnose.Marginal {
		c.Verdict = diagnose.Pass // no trouble injected and no limit crossed (a given plan may cross one)
	}
	return c, nil
}

func withDefaults(s Spec) (Spec, error) {
	s.Causes = slices.Clone(s.Causes)
	for _, c := range s.Causes {
		if !slices.Contains(AllCauses, c) && !slices.Contains(MoreCauses, c) {
			return s, fmt.Errorf("%w: unknown cause %q (known: %v)", ErrSpec, c, AllCauses)
		}
	}
	if !(s.Severity >= 0 && s.Severity <= 1) {
		return s, fmt.Errorf("%w: severity %g is outside 0…1", ErrSpec, s.Severity)
	}
	if s.Samples == 0 {
		s.Samples = 1440
	}
	if s.Samples < 10 {
		return s, fmt.Errorf("%w: %d samples; at least 10 are needed", ErrSpec, s.Samples)
	}
	if s.Interval == 0 {
		s.Interval = time.Minute
	}
	if s.Interval < time.Second {
		return s, fmt.Errorf("%w: interval %v is below one second", ErrSpec, s.Interval)
	}
	if s.Start.IsZero() {
		s.Start = DefaultStart
	}
	if s.Port == "" {
		s.Port = "port-1"
	}
	if s.Circuit == "" {
		s.Circuit = "circuit-1"
	}
	if s.EndA == "" {
		s.EndA = "site-a"
	}
	if s.EndZ == "" {
		s.EndZ = "site-z"
	}
	if s.Profile == nil {
		if s.ProfileID == "" {
			s.ProfileID = DefaultProfileID
		}
		all, err := builtinProfiles()
		if err != nil {
			return s, err
		}
		p, err := rules.ProfileByID(all, s.ProfileID)
		if err != nil {
			return s, fmt.Errorf("%w: %v", ErrSpec, err)
		}
		s.Profile = &p
	} else {
		p := *s.Profile
		s.Profile = &p
		s.ProfileID = p.ID
	}
	if s.Profile.BaudGBd <= 0 || s.Profile.FECThresholdBER <= 0 {
		return s, fmt.Errorf("%w: profile %s lacks a symbol rate or FEC threshold", ErrSpec, s.Profile.ID)
	}
	return s, nil
}

// builtinProfiles loads the built-in profiles once (Make is called in tight loops and from
// several goroutines).
var builtinProfiles = sync.OnceValues(rules.BuiltinProfiles)

// round rounds x to the given number of decimals, as a DSP reports its estimates; the result
// prints back in at most that many decimals.
func round(x float64, decimals int) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'f', decimals, 64), 64)
	return v
}

// sig3 rounds x to three significant digits (how BER is usually printed).
func sig3(x float64) float64 {
	if x == 0 || math.IsNaN(x) {
		return x
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'e', 2, 64), 64)
	return v
}
