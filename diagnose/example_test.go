package diagnose_test

import (
	"fmt"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// A 400ZR-class port whose carrier offset drifts 200 MHz per hour from +1000 MHz over half a
// day, judged without a link plan.
func ExampleAnalyzePort() {
	profiles, _ := rules.BuiltinProfiles()
	prof, _ := rules.ProfileByID(profiles, "400g-dp-16qam-cfec")
	rs, _ := rules.DefaultRules()

	s := &parse.Series{Port: "demo-1"}
	for i := 0; i <= 720; i++ { // one sample a minute
		s.TimesMs = append(s.TimesMs, 1_773_446_400_000+int64(i)*60_000)
		s.Values[parse.LOOffsetMHz] = append(s.Values[parse.LOOffsetMHz], 1000+200*float64(i)/60)
		s.Values[parse.PreFECBER] = append(s.Values[parse.PreFECBER], 1e-3)
		s.Values[parse.RxPowerDBm] = append(s.Values[parse.RxPowerDBm], -6)
	}
	res := diagnose.AnalyzePort(s, prof, nil, nil, rs)
	fmt.Println(res.Verdict, res.Causes[0].ID)
	fmt.Printf("%.0f MHz/h, %.1f h to the capture limit\n", res.Analysis.LOTrend.Slope, res.Analysis.LOTrend.HoursToLimit)
	fmt.Println(res.Causes[0].Evidence[0])
	// Output:
	// marginal lo-offset
	// 200 MHz/h, 1.0 h to the capture limit
	// |LO offset| reached 3400 MHz, 94 % of the module's ±3600 MHz capture range.
}
