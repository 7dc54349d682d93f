package synth_test

import (
	"fmt"
	"os"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
)

// A 400ZR-class port whose receive patch cord loses light, written as canonical CSV.
func ExampleMake() {
	c, err := synth.Make(synth.Spec{
		Causes:   []diagnose.CauseID{diagnose.CauseRxPowerLow},
		Severity: 0.5,
		Seed:     42,
		Samples:  10,
		Port:     "EXA-OT1/1/C1",
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(c.Verdict, c.Causes, c.Plan.Profile)
	fmt.Println(c.Notes[0])
	s := c.Series
	s.TimesMs, s.Values[parse.RxPowerDBm] = s.TimesMs[:2], s.Values[parse.RxPowerDBm][:2]
	cols := []synth.Column{{Header: "rx_power_dbm", Quantity: parse.RxPowerDBm}}
	for _, c := range synth.FriendlyColumns() {
		if c.Quantity == parse.RxPowerDBm {
			cols = append(cols, c) // "Rx power [mW]"
		}
	}
	synth.WriteCSV(os.Stdout, []*parse.Series{s}, synth.CSVStyle{Columns: cols})
	// Output:
	// fail [rx-power-low] 400g-dp-16qam-cfec
	// extra loss of 7.7 dB in the receive patch: received power -5.5 → -13.2 dBm (window -12…0 dBm)
	// time,port,rx_power_dbm,Rx power [mW]
	// 2026-03-14T00:00:00Z,EXA-OT1/1/C1,-13.31,0.046666
	// 2026-03-14T00:01:00Z,EXA-OT1/1/C1,-13.34,0.046345
}
