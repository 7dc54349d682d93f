package optics

import (
	"encoding/json"
	"math"
	"reflect"
	"strings"
)

// MarshalJSON writes the expectation with its json field names; a figure that is +Inf (no
// contribution, e.g. the ASE OSNR of an unamplified link) or NaN (not computable) is written as
// null, since JSON has no numbers for them.
func (e LinkExpectation) MarshalJSON() ([]byte, error) {
	return json.Marshal(finiteValue(reflect.ValueOf(e)))
}

// MarshalJSON writes the span with non-finite figures as null (see LinkExpectation.MarshalJSON).
func (s SpanExpectation) MarshalJSON() ([]byte, error) {
	return json.Marshal(finiteValue(reflect.ValueOf(s)))
}

// MarshalJSON writes the amplifier with non-finite figures as null.
func (a AmplifierExpectation) MarshalJSON() ([]byte, error) {
	return json.Marshal(finiteValue(reflect.ValueOf(a)))
}

// finiteValue turns structs into ordered field lists, floats that are not finite into nil, and
// recurses through slices; other values pass through.
func finiteValue(v reflect.Value) any {
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		f := v.Float()
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return nil
		}
		return f
	case reflect.Slice:
		if v.IsNil() {
			return []any{}
		}
		out := make([]any, v.Len())
		for i := range out {
			out[i] = finiteValue(v.Index(i))
		}
		return out
	case reflect.Struct:
		var obj orderedObject
		t := v.Type()
		for i := 0; i < t.NumField(); i++ {
			f := t.Field(i)
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if name == "-" || !f.IsExported() {
				continue
			}
			if name == "" {
				name = f.Name
			}
			obj = append(obj, field{name, finiteValue(v.Field(i))})
		}
		return obj
	}
	return v.Interface()
}

type field struct {
	key   string
	value any
}

// orderedObject is a JSON object that keeps its fields in declaration order.
type orderedObject []field

func (o orderedObject) MarshalJSON() ([]byte, error) {
	var b strings.Builder
	b.WriteByte('{')
	for i, f := range o {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(f.key)
		b.Write(k)
		b.WriteByte(':')
		v, err := json.Marshal(f.value)
		if err != nil {
			return nil, err
		}
		b.Write(v)
	}
	b.WriteByte('}')
	return []byte(b.String()), nil
}
