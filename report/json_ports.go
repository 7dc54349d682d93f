package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"io"
	"runtime"
	"sync"

	"github.com/beatnote/beatnote/diagnose"
)

// WriteResultJSON writes res, the result of check or triage, as the JSON object of the design
// contract: exactly as json.Encoder with SetIndent("", "  ") does, but it encodes
// the ports — nearly all of the bytes of a fleet triage — on several goroutines. A port at
// depth 2 of the indented document is json.MarshalIndent(port, "    ", "  ") after four spaces
// of indentation, so the pieces join into the same bytes (a test compares them). Nothing is
// written when any part fails to encode, as with the Encoder.
func WriteResultJSON(w io.Writer, res *diagnose.Result) error {
	const small = 64 // below this many ports the plain Encoder is as fast
	if len(res.Ports) < small {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(res)
	}
	// The document without ports, then the ports spliced in where "ports": [] stands. The
	// marker can only be the top-level member: strings never hold a raw newline.
	shell := *res
	shell.Ports = []diagnose.PortResult{}
	var head bytes.Buffer
	enc := json.NewEncoder(&head)
	enc.SetIndent("", "  ")
	if err := enc.Encode(&shell); err != nil {
		return err
	}
	marker := []byte("\n  \"ports\": [],\n")
	at := bytes.Index(head.Bytes(), marker)
	if at < 0 {
		enc := json.NewEncoder(w) // not the layout expected: leave it to the Encoder
		enc.SetIndent("", "  ")
		return enc.Encode(res)
	}
	// One exactly sized piece per port (no buffer doubling: a fleet's JSON is tens of MB).
	workers := min(runtime.GOMAXPROCS(0), len(res.Ports))
	parts := make([][]byte, len(res.Ports))
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for k := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			// An Encoder keeps its indentation buffer from port to port; its output is
			// json.MarshalIndent's plus a newline.
			var buf bytes.Buffer
			enc := json.NewEncoder(&buf)
			enc.SetIndent("    ", "  ")
			for i := k; i < len(res.Ports); i += workers {
				buf.Reset()
				if err := enc.Encode(&res.Ports[i]); err != nil {
					errs[k] = err
					return
				}
				parts[i] = bytes.Clone(bytes.TrimSuffix(buf.Bytes(), []byte("\n")))
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	out := head.Bytes()
	bw := bufio.NewWriterSize(w, 256<<10)
	bw.Write(out[:at])
	bw.WriteString("\n  \"ports\": [\n")
	for i, js := range parts {
		if i > 0 {
			bw.WriteString(",\n")
		}
		bw.WriteString("    ")
		bw.Write(js)
		parts[i] = nil // let it go once written
	}
	bw.WriteString("\n  ],\n")
	bw.Write(out[at+len(marker):])
	return bw.Flush() // a bufio.Writer keeps its first error and returns it here
}
