package rules

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// AcceptanceRules are the figures an acceptance test is judged by besides the module limits:
// how long the test runs, how much of it the log must cover, and the error-performance events
// and objectives of ITU-T G.826 and G.8201. Keys sit under `acceptance:` in the rules file.
type AcceptanceRules struct {
	// TestPeriodH is the test period, hours, when neither --soak nor the plan gives one: the
	// 24-hour bringing-into-service test of ITU-T M.2110 (from memory; the recommendation also
	// uses 15 min, 2 h and 7 days).
	TestPeriodH float64 `yaml:"test_period_h" json:"test_period_h"`
	// MinCoverage is the fraction of the test period's sample slots that must hold a used row;
	// below it the test is incomplete. Rejected rows and gaps count against it.
	MinCoverage float64 `yaml:"min_coverage" json:"min_coverage"`
	// SESErroredBlockFraction is the fraction of a second's blocks that, errored, makes the
	// second severely errored (or any defect in it).
	SESErroredBlockFraction float64 `yaml:"ses_errored_block_fraction" json:"ses_errored_block_fraction"`
	// UnavailableAfterSES is the run of consecutive severely errored seconds that starts
	// unavailable time (and the run of non-SES seconds that ends it), seconds.
	UnavailableAfterSES int `yaml:"unavailable_after_ses_s" json:"unavailable_after_ses_s"`
	// SESRObjective and BBERObjective are the largest severely errored second ratio and
	// background block error ratio accepted over the available time.
	SESRObjective float64 `yaml:"sesr_objective" json:"sesr_objective"`
	BBERObjective float64 `yaml:"bber_objective" json:"bber_objective"`
	// MaxUnavailableS is the unavailable time accepted within the test period, seconds.
	MaxUnavailableS float64 `yaml:"max_unavailable_s" json:"max_unavailable_s"`
	// BlockBits is the size of the block errors are counted in, bits; the block rate is the
	// profile's line rate over it.
	BlockBits float64 `yaml:"block_bits" json:"block_bits"`
}

// checks lists the sanity ranges of the acceptance values for Rules.Validate.
func (a AcceptanceRules) checks() []rangeCheck {
	return []rangeCheck{
		{"acceptance.test_period_h", a.TestPeriodH, 0, 24 * 366, "h"},
		{"acceptance.min_coverage", a.MinCoverage, 0, 1, ""},
		{"acceptance.ses_errored_block_fraction", a.SESErroredBlockFraction, 0.001, 1, ""},
		{"acceptance.unavailable_after_ses_s", float64(a.UnavailableAfterSES), 1, 3600, "s"},
		{"acceptance.sesr_objective", a.SESRObjective, 0, 1, ""},
		{"acceptance.bber_objective", a.BBERObjective, 0, 1, ""},
		{"acceptance.max_unavailable_s", a.MaxUnavailableS, 0, 86400 * 366, "s"},
		{"acceptance.block_bits", a.BlockBits, 8, 1e9, "bit"},
	}
}

// TestPeriods are the bringing-into-service test periods of ITU-T M.2110 (from memory), by the
// names --soak and a plan's soak accept besides any other duration.
var TestPeriods = []string{"15m", "2h", "24h", "7d"}

// ParseTestPeriod reads a test period: a Go duration ("15m", "2h", "36h") or whole days ("7d").
// It must be at least a minute and at most a year.
func ParseTestPeriod(s string) (time.Duration, error) {
	t := strings.TrimSpace(s)
	var d time.Duration
	if days, ok := strings.CutSuffix(t, "d"); ok {
		n, err := strconv.Atoi(days)
		if err != nil {
			return 0, fmt.Errorf("test period %q: want whole days like 7d, or a duration like 24h", s)
		}
		d = time.Duration(n) * 24 * time.Hour
	} else {
		var err error
		if d, err = time.ParseDuration(t); err != nil {
			return 0, fmt.Errorf("test period %q: want a duration like 15m, 2h, 24h or 7d", s)
		}
	}
	if d < time.Minute || d > 366*24*time.Hour {
		return 0, fmt.Errorf("test period %q: must lie between 1 minute and a year (the usual ones are %s)", s, strings.Join(TestPeriods, ", "))
	}
	return d, nil
}
