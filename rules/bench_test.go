package rules

import (
	"fmt"
	"strings"
	"testing"
)

// BenchmarkParsePortMap parses a port map of 20,000 exact ports, the shape samples/fleetgen
// writes for its folder of one file per port.
func BenchmarkParsePortMap(b *testing.B) {
	profiles, err := BuiltinProfiles()
	if err != nil {
		b.Fatal(err)
	}
	var sb strings.Builder
	sb.WriteString("ports:\n")
	for i := 0; i < 20000; i++ {
		fmt.Fprintf(&sb, "    - port: NE%03d-%d/%d/C1\n      profile: %s\n", i/64, i/4%16, i%4+1, profiles[i%len(profiles)].ID)
	}
	data := []byte(sb.String())
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for b.Loop() {
		if _, err := ParsePortMap("map.yaml", data, profiles...); err != nil {
			b.Fatal(err)
		}
	}
}
