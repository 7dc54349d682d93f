package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"io"

	"github.com/beatnote/beatnote/diagnose"
)

// WriteResultJSON writes res, the result of check or triage, as the JSON object of the design
// contract, byte for byte what json.Encoder with SetIndent("", "  ") writes for it (a test
// compares them), but streamed: the members in the order of diagnose.Result's fields, and the
// elements of each list one by one, go through one bounded buffer to w, so the document is
// never held whole (a fleet's JSON is tens to hundreds of MB). A value at depth d of the
// indented document is json.MarshalIndent(value, prefix, "  ") with a prefix of 2d spaces,
// written after that prefix.
//
// An element that cannot be encoded (a NaN, say) stops the write with the error; what was
// written before it stays written, so the output is then not a whole JSON document and the
// caller must fail.
func WriteResultJSON(w io.Writer, res *diagnose.Result) error {
	return writeResultJSON(w, res, func(jw *jsonStream) { writeList(jw, "ports", res.Ports, false) })
}

// PortEncoder encodes ports as json.Marshal does, but without their line findings: what
// WriteResultJSONPorts takes back, with the line findings found later. An encoder reuses its
// memory from port to port; it is not safe for concurrent use.
type PortEncoder struct {
	compact bytes.Buffer
	enc     *json.Encoder
}

// Encode gives port p's JSON, valid until the next call.
func (e *PortEncoder) Encode(p *diagnose.PortResult) ([]byte, error) {
	if e.enc == nil {
		e.enc = json.NewEncoder(&e.compact) // json.Marshal's bytes, and a newline
	}
	q := *p
	q.LineFindings = nil
	e.compact.Reset()
	if err := e.enc.Encode(&q); err != nil {
		return nil, err
	}
	return bytes.TrimSuffix(e.compact.Bytes(), []byte("\n")), nil
}

// WriteResultJSONPorts writes what WriteResultJSON writes for res with n ports (res.Ports is not
// read): the i-th port (i < n) is given by port as its PortEncoder bytes and its line findings.
// Each port is held only while it is written.
func WriteResultJSONPorts(w io.Writer, res *diagnose.Result, n int, port func(i int) (compact []byte, lf []diagnose.LineRef, err error)) error {
	return writeResultJSON(w, res, func(j *jsonStream) {
		j.key("ports")
		if n == 0 {
			j.bw.WriteString("[]")
			j.end(false)
			return
		}
		j.bw.WriteString("[\n")
		var spliced, indented []byte
		for i := 0; i < n; i++ {
			compact, lf, err := port(i)
			if err == nil && len(lf) > 0 {
				// line_findings is the last member of a port (PortResult's last field):
				// json.Marshal of the port with them is the port without them, less its
				// closing brace, then the member.
				var js []byte
				if js, err = json.Marshal(lf); err == nil && len(compact) > 0 && compact[len(compact)-1] == '}' {
					spliced = append(append(append(spliced[:0], compact[:len(compact)-1]...), `,"line_findings":`...), js...)
					compact = append(spliced, '}')
				}
			}
			if err != nil {
				j.err = err
				return
			}
			if i > 0 {
				j.bw.WriteString(",\n")
			}
			j.bw.WriteString("    ")
			indented = appendIndent(indented[:0], compact, "    ", "  ")
			j.bw.Write(indented)
		}
		j.bw.WriteString("\n  ]")
		j.end(false)
	})
}

// appendIndent appends src, compact JSON as json.Marshal writes it (no white space outside
// strings), indented as json.Indent(dst, src, prefix, indent) indents it: a newline, the
// prefix and one indent per depth after an opening bracket (unless the list or object is
// empty), after a comma and before a closing bracket, and a space after a colon. Unlike
// json.Indent it does not validate src, which it trusts: it only steps over strings.
func appendIndent(dst, src []byte, prefix, indent string) []byte {
	depth := 0
	newline := func() {
		dst = append(dst, '\n')
		dst = append(dst, prefix...)
		for range depth {
			dst = append(dst, indent...)
		}
	}
	for i := 0; i < len(src); i++ {
		switch c := src[i]; c {
		case '"':
			j := i + 1
			for j < len(src) && src[j] != '"' {
				if src[j] == '\\' {
					j++
				}
				j++
			}
			j = min(j+1, len(src))
			dst = append(dst, src[i:j]...)
			i = j - 1
		case '{', '[':
			dst = append(dst, c)
			if i+1 < len(src) && (src[i+1] == '}' || src[i+1] == ']') {
				dst = append(dst, src[i+1])
				i++
				continue
			}
			depth++
			newline()
		case '}', ']':
			depth--
			newline()
			dst = append(dst, c)
		case ',':
			dst = append(dst, c)
			newline()
		case ':':
			dst = append(dst, ':', ' ')
		default:
			j := i + 1
			for j < len(src) && !structural[src[j]] {
				j++
			}
			dst = append(dst, src[i:j]...)
			i = j - 1
		}
	}
	return dst
}

// structural are the bytes that end a run of a number or literal in compact JSON.
var structural = [256]bool{'"': true, '{': true, '[': true, '}': true, ']': true, ',': true, ':': true}

// writeResultJSON writes the members of res in order, the ports by ports.
func writeResultJSON(w io.Writer, res *diagnose.Result, ports func(*jsonStream)) error {
	jw := jsonStream{bw: bufio.NewWriterSize(w, 64<<10)}
	jw.bw.WriteString("{\n")
	jw.member("tool", res.Tool, false)
	jw.member("version", res.Version, false)
	writeList(&jw, "inputs", res.Inputs, false)
	if jw.err == nil {
		ports(&jw)
	}
	writeList(&jw, "rejected", res.Rejected, len(res.Lines) == 0 && len(res.Directions) == 0)
	if len(res.Lines) > 0 { // omitempty
		writeList(&jw, "lines", res.Lines, len(res.Directions) == 0)
	}
	if len(res.Directions) > 0 { // omitempty
		writeList(&jw, "directions", res.Directions, true)
	}
	if jw.err != nil {
		return jw.err
	}
	jw.bw.WriteString("}\n")
	return jw.bw.Flush() // a bufio.Writer keeps its first write error and returns it here
}

// jsonStream writes the members of the top-level object; the first encoding error is kept and
// stops the rest.
type jsonStream struct {
	bw  *bufio.Writer
	err error
	buf bytes.Buffer
	enc *json.Encoder // indented for depth 2 (a list's elements), reused element to element
}

// member writes `  "name": value` at depth 1, then "," unless last, then a newline.
func (j *jsonStream) member(name string, v any, last bool) {
	if j.err != nil {
		return
	}
	js, err := json.MarshalIndent(v, "  ", "  ")
	if err != nil {
		j.err = err
		return
	}
	j.key(name)
	j.bw.Write(js)
	j.end(last)
}

func (j *jsonStream) key(name string) {
	j.bw.WriteString(`  "`)
	j.bw.WriteString(name) // the contract's member names: plain ASCII, nothing to escape
	j.bw.WriteString(`": `)
}

func (j *jsonStream) end(last bool) {
	if !last {
		j.bw.WriteByte(',')
	}
	j.bw.WriteByte('\n')
}

// writeList writes the member name: list at depth 1, its elements one at a time: null for a
// nil slice and [] for an empty one, as encoding/json does.
func writeList[T any](j *jsonStream, name string, list []T, last bool) {
	if j.err != nil {
		return
	}
	if len(list) == 0 {
		j.key(name)
		if list == nil {
			j.bw.WriteString("null")
		} else {
			j.bw.WriteString("[]")
		}
		j.end(last)
		return
	}
	if j.enc == nil {
		j.enc = json.NewEncoder(&j.buf)
		j.enc.SetIndent("    ", "  ")
	}
	j.key(name)
	j.bw.WriteString("[\n")
	for i := range list {
		j.buf.Reset()
		if err := j.enc.Encode(&list[i]); err != nil {
			j.err = err
			return
		}
		if i > 0 {
			j.bw.WriteString(",\n")
		}
		j.bw.WriteString("    ")
		j.bw.Write(bytes.TrimSuffix(j.buf.Bytes(), []byte("\n"))) // the Encoder ends each value with a newline
	}
	j.bw.WriteString("\n  ]")
	j.end(last)
}
