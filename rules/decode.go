package rules

import (
	"encoding"
	"errors"
	"fmt"
	"math"
	"reflect"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Sentinel errors wrapped by FileError and FieldError, for errors.Is.
var (
	ErrUnknownField   = errors.New("unknown field")
	ErrType           = errors.New("wrong type")
	ErrRange          = errors.New("out of range")
	ErrMissing        = errors.New("missing")
	ErrUnknownProfile = errors.New("unknown profile")
	ErrDuplicate      = errors.New("duplicate")
	ErrEmpty          = errors.New("file holds no document")
)

// FileError is a fault in a rules, profiles, plan or port-map file: where it is and what is
// wrong. Line is 1-based; 0 when the fault has no line (e.g. the file cannot be read).
type FileError struct {
	File  string
	Line  int
	Field string // dotted path, e.g. "spans[1].length_km"; "" when not about one field
	Err   error
}

func (e *FileError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	if e.Field != "" {
		b.WriteString(": ")
		b.WriteString(e.Field)
	}
	b.WriteString(": ")
	b.WriteString(e.Err.Error())
	return b.String()
}

func (e *FileError) Unwrap() error { return e.Err }

// FieldError is what Validate returns: the field at fault and what is wrong with it. Loaders turn
// it into a FileError with the line of that field.
type FieldError struct {
	Field string
	Err   error
}

func (e *FieldError) Error() string { return e.Field + ": " + e.Err.Error() }
func (e *FieldError) Unwrap() error { return e.Err }

// fieldErr builds a FieldError wrapping sentinel with a formatted detail.
func fieldErr(field string, sentinel error, format string, a ...any) *FieldError {
	return &FieldError{Field: field, Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, a...))}
}

// prefixField puts prefix before the field of a FieldError (e.g. "profiles[2]").
func prefixField(prefix string, err error) error {
	var fe *FieldError
	if errors.As(err, &fe) {
		return &FieldError{Field: joinPath(prefix, fe.Field), Err: fe.Err}
	}
	return err
}

func joinPath(parent, child string) string {
	switch {
	case parent == "":
		return child
	case child == "":
		return parent
	case strings.HasPrefix(child, "["):
		return parent + child
	}
	return parent + "." + child
}

// lineIndex maps the dotted path of every key and item of a YAML document to its line.
type lineIndex map[string]int

// lineOf finds the line of path, or of its nearest ancestor present in the file.
func (ix lineIndex) lineOf(path string) int {
	for {
		if l, ok := ix[path]; ok {
			return l
		}
		i := strings.LastIndexAny(path, ".[")
		if i < 0 {
			return ix[""]
		}
		path = path[:i]
	}
}

// toFileError turns a Validate error into a FileError at the line of its field.
func (ix lineIndex) toFileError(file string, err error) error {
	if err == nil {
		return nil
	}
	var fe *FieldError
	if errors.As(err, &fe) {
		return &FileError{File: file, Line: ix.lineOf(fe.Field), Field: fe.Field, Err: fe.Err}
	}
	return &FileError{File: file, Err: err}
}

// decodeStrict decodes one YAML document into out, which must be a pointer. Unknown keys,
// duplicate keys and values of the wrong type fail with a FileError carrying the line and the
// field. Fields out already holds and the document does not mention are kept, so decoding onto
// defaults overrides individual values. It returns the document's root node and line index.
//
// The document is parsed once, into nodes: a walker checks them against out's type (unknown
// and duplicate keys, values that do not fit, every key's line), then the same nodes are decoded
// into out. The walk reaches every mapping that becomes a struct (the rules types have no
// custom unmarshalers or interface fields), so it is the unknown-key check a strict decoder
// would make; decoding is the safety net for any wrong type it let through.
func decodeStrict(file string, data []byte, out any) (*yaml.Node, lineIndex, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, nil, &FileError{File: file, Line: yamlErrLine(err), Err: fmt.Errorf("not valid YAML: %s", stripYAMLPrefix(err))}
	}
	if doc.Kind == 0 || len(doc.Content) == 0 {
		return nil, nil, &FileError{File: file, Err: ErrEmpty}
	}
	root := doc.Content[0]
	ix := lineIndex{"": root.Line}
	w := walker{file: file, ix: ix, fields: map[reflect.Type]map[string]reflect.Type{}}
	if err := w.check(root, reflect.TypeOf(out).Elem(), ""); err != nil {
		return nil, nil, err
	}
	if err := doc.Decode(out); err != nil {
		return nil, nil, &FileError{File: file, Line: yamlErrLine(err), Err: errors.New(stripYAMLPrefix(err))}
	}
	return root, ix, nil
}

var yamlLineRE = regexp.MustCompile(`line (\d+)`)

func yamlErrLine(err error) int {
	m := yamlLineRE.FindStringSubmatch(err.Error())
	if m == nil {
		return 0
	}
	n, _ := strconv.Atoi(m[1])
	return n
}

var yamlPrefixRE = regexp.MustCompile(`^yaml: (unmarshal errors:\n\s*)?(line \d+: )?`)

func stripYAMLPrefix(err error) string {
	return strings.TrimSpace(yamlPrefixRE.ReplaceAllString(err.Error(), ""))
}

// yamlFields maps the yaml names of a struct type's fields to their types.
func yamlFields(t reflect.Type) map[string]reflect.Type {
	m := make(map[string]reflect.Type, t.NumField())
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("yaml"), ",")
		if name == "-" {
			continue
		}
		if name == "" {
			name = strings.ToLower(f.Name)
		}
		m[name] = f.Type
	}
	return m
}

// walker is the state of that walk: the file named in errors, the line index it fills, and each
// struct type's fields (yamlFields), found once per type.
type walker struct {
	file   string
	ix     lineIndex
	fields map[reflect.Type]map[string]reflect.Type
}

var textUnmarshalerType = reflect.TypeFor[encoding.TextUnmarshaler]()

// check walks n against the Go type t, recording lines and failing on unknown or duplicate keys
// and on values that do not fit their type.
func (w *walker) check(n *yaml.Node, t reflect.Type, path string) error {
	if n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	w.ix[path] = n.Line
	bad := func(format string, a ...any) error {
		return &FileError{File: w.file, Line: n.Line, Field: path, Err: fmt.Errorf("%w: %s", ErrType, fmt.Sprintf(format, a...))}
	}
	if t.Kind() == reflect.Pointer {
		if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
			return nil
		}
		t = t.Elem()
	}
	switch t.Kind() {
	case reflect.Struct:
		if n.Kind != yaml.MappingNode {
			return bad("expected a mapping of keys to values")
		}
		fields, ok := w.fields[t]
		if !ok {
			fields = yamlFields(t)
			w.fields[t] = fields
		}
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			p := joinPath(path, k.Value)
			ft, ok := fields[k.Value]
			if !ok {
				return &FileError{File: w.file, Line: k.Line, Field: p, Err: fmt.Errorf("%w (known: %s)", ErrUnknownField, knownKeys(fields))}
			}
			// A struct has few fields: the keys before this one are searched for a duplicate.
			for j := 0; j < i; j += 2 {
				if first := n.Content[j]; first.Value == k.Value {
					return &FileError{File: w.file, Line: k.Line, Field: p, Err: fmt.Errorf("%w key, first given on line %d", ErrDuplicate, first.Line)}
				}
			}
			if err := w.check(v, ft, p); err != nil {
				return err
			}
			w.ix[p] = k.Line
		}
	case reflect.Slice:
		if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
			return nil
		}
		if n.Kind != yaml.SequenceNode {
			return bad("expected a list")
		}
		for i, item := range n.Content {
			if err := w.check(item, t.Elem(), path+"["+strconv.Itoa(i)+"]"); err != nil {
				return err
			}
		}
	case reflect.Map:
		if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
			return nil
		}
		if n.Kind != yaml.MappingNode {
			return bad("expected a mapping of keys to values")
		}
		seen := map[string]int{}
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			p := joinPath(path, k.Value)
			if first, dup := seen[k.Value]; dup {
				return &FileError{File: w.file, Line: k.Line, Field: p, Err: fmt.Errorf("%w key, first given on line %d", ErrDuplicate, first)}
			}
			seen[k.Value] = k.Line
			if err := w.check(v, t.Elem(), p); err != nil {
				return err
			}
			w.ix[p] = k.Line
		}
	default:
		if n.Kind != yaml.ScalarNode {
			return bad("expected a single value")
		}
		if t.Kind() == reflect.String && n.Tag == "!!str" && !reflect.PointerTo(t).Implements(textUnmarshalerType) {
			return nil // a plain string scalar always decodes into a string
		}
		v := reflect.New(t)
		if err := n.Decode(v.Interface()); err != nil {
			return bad("%q is not %s", n.Value, kindName(t))
		}
		if t.Kind() == reflect.Float64 && (math.IsNaN(v.Elem().Float()) || math.IsInf(v.Elem().Float(), 0)) {
			return &FileError{File: w.file, Line: n.Line, Field: path, Err: fmt.Errorf("%w: %q is not a finite number", ErrRange, n.Value)}
		}
	}
	return nil
}

func knownKeys(fields map[string]reflect.Type) string {
	keys := make([]string, 0, len(fields))
	for k := range fields {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return strings.Join(keys, ", ")
}

func kindName(t reflect.Type) string {
	switch t.Kind() {
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return "a whole number"
	case reflect.Bool:
		return "true or false"
	case reflect.String:
		return "text"
	}
	return t.String()
}
