package diagnose_test

import (
	"fmt"
	"math"
	"reflect"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
)

// Analyze on several workers gives exactly the Result of one worker: every port's verdict,
// causes, evidence, metrics, criteria and time-series findings, in the same order.
func TestAnalyzeParallelMatchesOneWorker(t *testing.T) {
	ds, cfg := fleetDataset(t, 48, 360, 1)
	cfg.Workers = 1
	one, err := diagnose.Analyze(ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	verdicts := map[diagnose.Verdict]int{}
	for _, p := range one.Ports {
		verdicts[p.Verdict]++
	}
	if verdicts[diagnose.Pass] == 0 || verdicts[diagnose.Pass] == len(one.Ports) {
		t.Fatalf("the fleet should mix passing and troubled ports: %v", verdicts)
	}
	for _, workers := range []int{2, 5, 0} {
		cfg.Workers = workers
		got, err := diagnose.Analyze(ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		if path, ok := sameValue(reflect.ValueOf(got), reflect.ValueOf(one), "Result"); !ok {
			t.Errorf("%d workers: result differs from one worker at %s", workers, path)
		}
	}
}

// sameValue compares deeply like reflect.DeepEqual, except that NaN equals NaN (the findings
// hold NaN for "not known") and a float's sign of zero counts; it names the first difference.
func sameValue(a, b reflect.Value, path string) (string, bool) {
	if a.Kind() != b.Kind() || a.Type() != b.Type() {
		return path + " (type)", false
	}
	switch a.Kind() {
	case reflect.Float32, reflect.Float64:
		x, y := a.Float(), b.Float()
		if math.IsNaN(x) && math.IsNaN(y) || math.Float64bits(x) == math.Float64bits(y) {
			return "", true
		}
		return fmt.Sprintf("%s (%v vs %v)", path, x, y), false
	case reflect.Pointer, reflect.Interface:
		if a.IsNil() || b.IsNil() {
			return path, a.IsNil() == b.IsNil()
		}
		if a.Kind() == reflect.Pointer && a.Pointer() == b.Pointer() {
			return "", true
		}
		return sameValue(a.Elem(), b.Elem(), path)
	case reflect.Slice:
		if a.IsNil() != b.IsNil() || a.Len() != b.Len() {
			return path + " (length)", false
		}
		fallthrough
	case reflect.Array:
		for i := range a.Len() {
			if p, ok := sameValue(a.Index(i), b.Index(i), fmt.Sprintf("%s[%d]", path, i)); !ok {
				return p, false
			}
		}
		return "", true
	case reflect.Map:
		if a.IsNil() != b.IsNil() || a.Len() != b.Len() {
			return path + " (size)", false
		}
		for _, k := range a.MapKeys() {
			bv := b.MapIndex(k)
			if !bv.IsValid() {
				return fmt.Sprintf("%s[%v] (missing)", path, k), false
			}
			if p, ok := sameValue(a.MapIndex(k), bv, fmt.Sprintf("%s[%v]", path, k)); !ok {
				return p, false
			}
		}
		return "", true
	case reflect.Struct:
		for i := range a.NumField() {
			if p, ok := sameValue(a.Field(i), b.Field(i), path+"."+a.Type().Field(i).Name); !ok {
				return p, false
			}
		}
		return "", true
	case reflect.String:
		return path, a.String() == b.String()
	case reflect.Bool:
		return path, a.Bool() == b.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return path, a.Int() == b.Int()
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return path, a.Uint() == b.Uint()
	case reflect.Func:
		return path, a.IsNil() == b.IsNil()
	}
	return path + " (kind " + a.Kind().String() + " not compared)", false
}

// Correlations computed on demand leave every verdict, cause, evidence sentence, metric,
// criterion and finding as computing them all does; the correlations kept are a subset of the
// full list, each with the same value. The fleet must make some cause ask for one, or the
// check would not exercise the lazy path.
func TestCorrelationsOnDemandMatchFull(t *testing.T) {
	ds, cfg := fleetDataset(t, 48, 360, 1)
	full, err := diagnose.Analyze(ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	cfg.CorrelationsOnDemand = true
	lean, err := diagnose.Analyze(ds, cfg)
	if err != nil {
		t.Fatal(err)
	}
	asked, fewer := 0, 0
	for i := range full.Ports {
		f, l := full.Ports[i].Analysis, lean.Ports[i].Analysis
		byB := map[string]diagnose.Correlation{}
		for _, c := range f.Correlations {
			byB[c.B] = c
		}
		for _, c := range l.Correlations {
			asked++
			if path, ok := sameValue(reflect.ValueOf(c), reflect.ValueOf(byB[c.B]), "Correlation"); !ok {
				t.Errorf("port %s: on-demand correlation differs at %s", full.Ports[i].Port, path)
			}
		}
		if len(l.Correlations) < len(f.Correlations) {
			fewer++
		}
		fc, lc := f.Correlations, l.Correlations
		f.Correlations, l.Correlations = nil, nil
		if path, ok := sameValue(reflect.ValueOf(lean.Ports[i]), reflect.ValueOf(full.Ports[i]), "Port"); !ok {
			t.Errorf("port %s: result differs at %s", full.Ports[i].Port, path)
		}
		f.Correlations, l.Correlations = fc, lc
	}
	if asked == 0 || fewer == 0 {
		t.Fatalf("the fleet should have ports whose causes ask for a correlation (%d asked) and ports that skip some (%d)", asked, fewer)
	}
}
