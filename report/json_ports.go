package report

import (
	"bytes"
	"encoding/json"
	"io"
	"runtime"
	"sync"

	"github.com/beatnote/beatnote/diagnose"
)

// writeResultJSON writes res exactly as json.Encoder with SetIndent("", "  ") does, but encodes
// the ports — nearly all of the bytes of a fleet triage — on several goroutines. A port at
// depth 2 of the indented document is json.MarshalIndent(port, "    ", "  ") after four spaces
// of indentation, so the pieces join into the same bytes (a test compares them). Nothing is
// written when any part fails to encode, as with the Encoder.
func writeResultJSON(w io.Writer, res *diagnose.Result) error {
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
	workers := min(runtime.GOMAXPROCS(0), len(res.Ports))
	parts := make([][]byte, workers)
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for k := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			lo, hi := k*len(res.Ports)/workers, (k+1)*len(res.Ports)/workers
			var b bytes.Buffer
			for i := lo; i < hi; i++ {
				js, err := json.MarshalIndent(&res.Ports[i], "    ", "  ")
				if err != nil {
					errs[k] = err
					return
				}
				if i > 0 {
					b.WriteString(",\n")
				}
				b.WriteString("    ")
				b.Write(js)
			}
			parts[k] = b.Bytes()
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	out := head.Bytes()
	pieces := [][]byte{out[:at], []byte("\n  \"ports\": [\n")}
	pieces = append(pieces, parts...)
	pieces = append(pieces, []byte("\n  ],\n"), out[at+len(marker):])
	for _, p := range pieces {
		if _, err := w.Write(p); err != nil {
			return err
		}
	}
	return nil
}
