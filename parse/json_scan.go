package parse

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
)

// jsonKind is the type of one JSON value.
type jsonKind uint8

const (
	jNull jsonKind = iota
	jBool
	jNumber
	jString
	jObject
	jArray
)

// jnode is one value of a parsed JSON document. Nodes are stored in document order; the
// members (or elements) of a container follow it, and end is the index just after the
// container's last descendant, so the children of node i are i+1, nodes[i+1].end, … up to
// nodes[i].end. Spans are offsets into the document's bytes: for a string, the text between the
// quotes; for a number or a literal, its text.
type jnode struct {
	kind   jsonKind
	esc    bool // string value has escapes or non-ASCII bytes: decode it with text()
	keyEsc bool // the same for the member name, whose decoded text is then jdoc.keys[k0]
	end    int32
	k0, k1 int32 // member name, for members of an object
	v0, v1 int32
}

// maxJSONDepth bounds nesting, as encoding/json does (10000 levels).
const maxJSONDepth = 10000

// maxJSONDocument bounds one JSON document (a line of JSON Lines, or a document of a stream or
// an array): the reader holds a whole document while it parses it (a variable so that tests can
// lower it; below 1 GiB keeps every offset in an int32).
var maxJSONDocument = 1 << 30

// jdoc is a parsed JSON value: a flat list of nodes over the document's bytes, with no maps and
// no per-value allocation. One jdoc is reused for document after document.
type jdoc struct {
	data  []byte
	nodes []jnode
	keys  []string // decoded member names that had escapes
	depth int
}

var errJSONSyntax = errors.New("syntax error")

// parseValue parses the JSON value starting at data[i] (after white space) into d, replacing
// what d held, and returns the offset just after it. The grammar is RFC 8259 as encoding/json
// reads it: invalid UTF-8 inside strings is accepted (and replaced when decoded).
func (d *jdoc) parseValue(data []byte, i int) (int, error) {
	d.data = data
	d.nodes = d.nodes[:0]
	d.keys = d.keys[:0]
	d.depth = 0
	i = skipSpace(data, i)
	return d.value(i, -1, -1, false)
}

func (d *jdoc) syntaxErr(i int, what string) error {
	if i >= len(d.data) {
		return fmt.Errorf("unexpected end of JSON input")
	}
	return fmt.Errorf("invalid character %q %s (offset %d)", d.data[i], what, i)
}

// value parses one value at data[i] (no leading space) as the member named data[k0:k1].
func (d *jdoc) value(i int, k0, k1 int, keyEsc bool) (int, error) {
	data := d.data
	if i >= len(data) {
		return i, d.syntaxErr(i, "")
	}
	idx := len(d.nodes)
	if keyEsc {
		k0 = len(d.keys) - 1
	}
	d.nodes = append(d.nodes, jnode{k0: int32(k0), k1: int32(k1), keyEsc: keyEsc})
	n := &d.nodes[idx]
	switch c := data[i]; {
	case c == '{':
		n.kind = jObject
		if d.depth++; d.depth > maxJSONDepth {
			return i, errors.New("exceeded max depth")
		}
		i = skipSpace(data, i+1)
		if i < len(data) && data[i] == '}' {
			i++
			break
		}
		for {
			if i >= len(data) || data[i] != '"' {
				return i, d.syntaxErr(i, "looking for beginning of object key string")
			}
			s0, s1, esc, j, err := d.str(i)
			if err != nil {
				return j, err
			}
			if esc {
				var key string
				if err := json.Unmarshal(data[i:j], &key); err != nil {
					return i, err
				}
				d.keys = append(d.keys, key)
			}
			i = skipSpace(data, j)
			if i >= len(data) || data[i] != ':' {
				return i, d.syntaxErr(i, "after object key")
			}
			i = skipSpace(data, i+1)
			if i, err = d.value(i, s0, s1, esc); err != nil {
				return i, err
			}
			i = skipSpace(data, i)
			if i < len(data) && data[i] == ',' {
				i = skipSpace(data, i+1)
				continue
			}
			if i < len(data) && data[i] == '}' {
				i++
				break
			}
			return i, d.syntaxErr(i, "after object key:value pair")
		}
		d.depth--
	case c == '[':
		n.kind = jArray
		if d.depth++; d.depth > maxJSONDepth {
			return i, errors.New("exceeded max depth")
		}
		i = skipSpace(data, i+1)
		if i < len(data) && data[i] == ']' {
			i++
			break
		}
		for {
			var err error
			if i, err = d.value(i, -1, -1, false); err != nil {
				return i, err
			}
			i = skipSpace(data, i)
			if i < len(data) && data[i] == ',' {
				i = skipSpace(data, i+1)
				continue
			}
			if i < len(data) && data[i] == ']' {
				i++
				break
			}
			return i, d.syntaxErr(i, "after array element")
		}
		d.depth--
	case c == '"':
		s0, s1, esc, j, err := d.str(i)
		if err != nil {
			return j, err
		}
		n.kind, n.v0, n.v1, n.esc = jString, int32(s0), int32(s1), esc
		i = j
	case c == '-' || (c >= '0' && c <= '9'):
		j, ok := scanNumber(data, i)
		if !ok {
			return j, d.syntaxErr(j, "in numeric literal")
		}
		n.kind, n.v0, n.v1 = jNumber, int32(i), int32(j)
		i = j
	case c == 't' || c == 'f' || c == 'n':
		lit := "null"
		n.kind = jNull
		if c == 't' {
			lit, n.kind = "true", jBool
		} else if c == 'f' {
			lit, n.kind = "false", jBool
		}
		for k := 0; k < len(lit); k++ {
			if i+k >= len(data) || data[i+k] != lit[k] {
				return i + k, d.syntaxErr(i+k, "in literal")
			}
		}
		n.v0, n.v1 = int32(i), int32(i+len(lit))
		i += len(lit)
	default:
		return i, d.syntaxErr(i, "looking for beginning of value")
	}
	d.nodes[idx].end = int32(len(d.nodes))
	return i, nil
}

// strPlain marks the bytes a string can hold as they are: not the quote, the backslash, a
// control character or a byte ≥ 0x80.
var strPlain = func() (t [256]bool) {
	for c := 0x20; c < 0x80; c++ {
		t[c] = c != '"' && c != '\\'
	}
	return t
}()

// str scans the string starting with the quote at data[i]: s0:s1 is its raw text, esc says
// whether it needs decoding (escapes or bytes ≥ 0x80), j is the offset after the closing quote.
func (d *jdoc) str(i int) (s0, s1 int, esc bool, j int, err error) {
	data := d.data
	s0 = i + 1
	for j = s0; j < len(data); j++ {
		for j < len(data) && strPlain[data[j]] {
			j++
		}
		if j >= len(data) {
			break
		}
		c := data[j]
		switch {
		case c == '"':
			return s0, j, esc, j + 1, nil
		case c < 0x20:
			return 0, 0, false, j, d.syntaxErr(j, "in string literal")
		case c >= 0x80:
			esc = true
		case c == '\\':
			esc = true
			j++
			if j >= len(data) {
				return 0, 0, false, j, d.syntaxErr(j, "")
			}
			switch data[j] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
			case 'u':
				for k := 1; k <= 4; k++ {
					if j+k >= len(data) || !isHex(data[j+k]) {
						return 0, 0, false, j + k, d.syntaxErr(j+k, "in \\u hexadecimal character escape")
					}
				}
				j += 4
			default:
				return 0, 0, false, j, d.syntaxErr(j, "in string escape code")
			}
		}
	}
	return 0, 0, false, j, d.syntaxErr(j, "")
}

func isHex(c byte) bool {
	return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F')
}

// scanNumber scans an RFC 8259 number at data[i]; ok is false when it is malformed, j then
// being the offending offset.
func scanNumber(data []byte, i int) (j int, ok bool) {
	j = i
	if data[j] == '-' {
		j++
	}
	digits := func() bool {
		k := j
		for j < len(data) && data[j] >= '0' && data[j] <= '9' {
			j++
		}
		return j > k
	}
	if j < len(data) && data[j] == '0' {
		j++
	} else if !digits() {
		return j, false
	}
	if j < len(data) && data[j] == '.' {
		j++
		if !digits() {
			return j, false
		}
	}
	if j < len(data) && (data[j] == 'e' || data[j] == 'E') {
		j++
		if j < len(data) && (data[j] == '+' || data[j] == '-') {
			j++
		}
		if !digits() {
			return j, false
		}
	}
	return j, true
}

// text is the decoded text of a string node (or the literal text of a number or literal).
// It allocates only for strings with escapes or non-ASCII bytes.
func (d *jdoc) text(n *jnode) []byte {
	if !n.esc {
		return d.data[n.v0:n.v1]
	}
	var s string
	if err := json.Unmarshal(d.data[n.v0-1:n.v1+1], &s); err != nil {
		return d.data[n.v0:n.v1] // cannot happen: the string was validated
	}
	return []byte(s)
}

// key is the decoded member name of node n.
func (d *jdoc) key(n *jnode) []byte {
	if n.keyEsc {
		return []byte(d.keys[n.k0])
	}
	return d.data[n.k0:n.k1]
}

// keyIs reports whether node n's member name is name.
func (d *jdoc) keyIs(n *jnode, name string) bool {
	if n.keyEsc {
		return d.keys[n.k0] == name
	}
	return string(d.data[n.k0:n.k1]) == name
}

// member finds the member name of object node obj (-1: none), also when the member name carries
// a module prefix ("module:name"); of several members with the same name the last counts, as
// when decoding into a map. A member whose value is null counts as absent (-1). name holds no
// colon.
func (d *jdoc) member(obj int, name string) int {
	if obj < 0 || d.nodes[obj].kind != jObject {
		return -1
	}
	exact, prefixed := -1, -1
	for c := obj + 1; c < int(d.nodes[obj].end); c = int(d.nodes[c].end) {
		n := &d.nodes[c]
		var k []byte
		if n.keyEsc {
			k = []byte(d.keys[n.k0])
		} else {
			k = d.data[n.k0:n.k1]
		}
		switch {
		case len(k) == len(name):
			if string(k) == name {
				exact = c
			}
		case prefixed < 0 && len(k) > len(name):
			// the last colon is just before name, which has none
			if p := len(k) - len(name); k[p-1] == ':' && string(k[p:]) == name {
				prefixed = c
			}
		}
	}
	m := exact
	if m < 0 {
		m = prefixed
	}
	if m >= 0 && d.nodes[m].kind == jNull {
		return -1
	}
	return m
}

// memberObj is member when its value is an object, else -1.
func (d *jdoc) memberObj(obj int, name string) int {
	m := d.member(obj, name)
	if m < 0 || d.nodes[m].kind != jObject {
		return -1
	}
	return m
}

// scalar gives the text of node v as a field: a string's text (trimmed), a number's or a
// boolean's literal; missing is true for an absent value (v < 0), null and the missing-value
// spellings.
func (d *jdoc) scalar(v int) (b []byte, missing bool) {
	if v < 0 {
		return nil, true
	}
	n := &d.nodes[v]
	switch n.kind {
	case jNull:
		return nil, true
	case jNumber, jBool:
		return d.data[n.v0:n.v1], false
	case jString:
		b := bytes.TrimSpace(d.text(n))
		return b, isMissing(b)
	}
	return []byte("(object or array)"), false
}
