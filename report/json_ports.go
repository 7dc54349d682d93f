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

// PortJSON is port p as json.Marshal encodes it, but without its line findings: what
// WriteResultJSONPorts takes back, with the line findings found later.
func PortJSON(p *diagnose.PortResult) ([]byte, error) {
	q := *p
	q.LineFindings = nil
	return json.Marshal(&q)
}

// WriteResultJSONPorts writes what WriteResultJSON writes for res with n ports (res.Ports is not
// read): the i-th port (i < n) is given by port as its PortJSON bytes and its line findings.
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
		var spliced []byte
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
			if err == nil {
				j.buf.Reset()
				err = json.Indent(&j.buf, compact, "    ", "  ")
			}
			if err != nil {
				j.err = err
				return
			}
			if i > 0 {
				j.bw.WriteString(",\n")
			}
			j.bw.WriteString("    ")
			j.bw.Write(j.buf.Bytes())
		}
		j.bw.WriteString("\n  ]")
		j.end(false)
	})
}

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
