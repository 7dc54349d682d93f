package words

import "testing"

func TestPlural(t *testing.T) {
	for _, c := range []struct {
		n    int
		want string
	}{
		{0, "0 bursts"}, {1, "1 burst"}, {2, "2 bursts"}, {12345, "12 345 bursts"}, {1234567, "1 234 567 bursts"}, {-3, "-3 bursts"}, {-12345, "-12 345 bursts"},
	} {
		if got := Plural(c.n, "burst", "bursts"); got != c.want {
			t.Errorf("Plural(%d) = %q, want %q", c.n, got, c.want)
		}
	}
	if got := Group(1234); got != "1234" {
		t.Errorf("Group(1234) = %q: four digits stay ungrouped", got)
	}
}
