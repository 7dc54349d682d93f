package parse

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"sync"
	"syscall"
	"testing"
	"time"
)

const benchRows = 200000

var benchData = sync.OnceValue(func() []byte { return benchCSV(benchRows, 64) })

// benchCSV makes a 16-column canonical CSV (RFC 3339 times, every quantity) of rows rows.
func benchCSV(rows, ports int) []byte {
	var b bytes.Buffer
	b.WriteString("time,port,pre_fec_ber,post_fec_ber,uncorrected_blocks,q_db,esnr_db,osnr_db,cd_ps_nm,dgd_ps,pdl_db,sop_rate_krad_s,lo_offset_mhz,rx_power_dbm,tx_power_dbm,frequency_thz\n")
	t0 := time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)
	for i := 0; i < rows; i++ {
		ts := t0.Add(time.Duration(i/ports) * 10 * time.Second).Format(time.RFC3339)
		fmt.Fprintf(&b, "%s,1/%d/C%d,%.3e,0,%d,%.2f,%.2f,%.2f,%.1f,%.2f,%.2f,%.1f,%.1f,%.2f,%.2f,193.1\n",
			ts, i%ports/8, i%8, 1e-3+float64(i%97)*1e-5, i%3, 9+float64(i%13)/10, 16+float64(i%7)/10,
			20+float64(i%11)/4, 1700+float64(i%5), 3+float64(i%9)/10, 0.4+float64(i%4)/10, 10+float64(i%17),
			-120+float64(i%21), -9.5+float64(i%6)/10, -1.5)
	}
	return b.Bytes()
}

// BenchmarkReadCSV reads the generated canonical CSV through the full path (hashing, parsing,
// unit checks, per-port series, sorting check). Reported per row.
func BenchmarkReadCSV(b *testing.B) {
	data := benchData()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		ds, err := ReadFile("bench.csv", bytes.NewReader(data), Options{})
		if err != nil || ds.Inputs[0].RowsUsed != benchRows {
			b.Fatalf("%v %+v", err, ds.Inputs)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
}

var benchJSONData = sync.OnceValue(func() []byte { return benchJSONL(benchData()) })

// benchJSONL writes the rows of a canonical CSV as JSON Lines: every field a member, numbers
// as JSON numbers.
func benchJSONL(csvData []byte) []byte {
	lines := bytes.Split(bytes.TrimSpace(csvData), []byte("\n"))
	header := bytes.Split(lines[0], []byte(","))
	var b bytes.Buffer
	for _, ln := range lines[1:] {
		for i, f := range bytes.Split(ln, []byte(",")) {
			b.WriteString(map[bool]string{true: "{", false: ","}[i == 0])
			fmt.Fprintf(&b, "%q:", header[i])
			if i < 2 {
				fmt.Fprintf(&b, "%q", f)
			} else {
				b.Write(f)
			}
		}
		b.WriteString("}\n")
	}
	return b.Bytes()
}

// BenchmarkReadJSONLines reads the rows of BenchmarkReadCSV as JSON Lines through the full path.
func BenchmarkReadJSONLines(b *testing.B) {
	data := benchJSONData()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		ds, err := ReadFile("bench.jsonl", bytes.NewReader(data), Options{})
		if err != nil || ds.Inputs[0].RowsUsed != benchRows {
			b.Fatalf("%v %+v", err, ds.Inputs)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
}

// BenchmarkReadCSVOneWorker is the same on one parsing goroutine.
func BenchmarkReadCSVOneWorker(b *testing.B) {
	data := benchData()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ReadFile("bench.csv", bytes.NewReader(data), Options{Workers: 1}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
}

// BenchmarkBaselineEncodingCSV is the yardstick: encoding/csv with ReuseRecord and
// strconv.ParseFloat on the 14 numeric fields — no time parsing, no checks, nothing stored.
func BenchmarkBaselineEncodingCSV(b *testing.B) {
	data := benchData()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		r := csv.NewReader(bytes.NewReader(data))
		r.ReuseRecord = true
		if _, err := r.Read(); err != nil {
			b.Fatal(err)
		}
		var sum float64
		for {
			rec, err := r.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			for _, f := range rec[2:] {
				v, err := strconv.ParseFloat(f, 64)
				if err != nil {
					b.Fatal(err)
				}
				sum += v
			}
		}
		_ = sum
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
}

func BenchmarkParseFloat(b *testing.B) {
	in := [][]byte{[]byte("1.234e-03"), []byte("-9.75"), []byte("1702.5"), []byte("193.1")}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		parseFloat(in[i&3])
	}
}

func BenchmarkParseTime(b *testing.B) {
	in := []byte("2026-03-14T08:30:00Z")
	b.ReportAllocs()
	for b.Loop() {
		parseTime(in)
	}
}

// benchOpenConfig writes docs OpenConfig documents of ports optical channels each, one document
// per line, shaped as an export of components and terminal-device state (every leaf in an
// instant container, the FEC leaves on the logical channel the optical channel is assigned).
func benchOpenConfig(docs, ports int) []byte {
	var b bytes.Buffer
	t0 := time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)
	for d := range docs {
		b.WriteString(`{"openconfig-platform:components":{"component":[`)
		for p := range ports {
			if p > 0 {
				b.WriteByte(',')
			}
			i := d*ports + p
			fmt.Fprintf(&b, `{"name":"NE%03d-1/%d/C1","optical-channel":{"state":{"carrier-frequency-offset":{"instant":%d},`+
				`"chromatic-dispersion":{"instant":%d},"frequency":"%d","input-power":{"instant":%.2f},"osnr":{"instant":%.1f},`+
				`"output-power":{"instant":%.2f},"polarization-dependent-loss":{"instant":%.1f},"polarization-mode-dispersion":{"instant":%.1f},`+
				`"sop-roc":{"instant":%.1f}}},"state":{"name":"NE%03d-1/%d/C1","type":"openconfig-platform-types:OPTICAL_CHANNEL"}}`,
				p/4, p%4, i%500-250, 1000+i%3000, 191700000+50000*(p%80), -9+float64(i%50)/10, 25+float64(i%130)/10,
				-7.5+float64(i%40)/10, 0.3+float64(i%4)/10, 0.2+float64(i%20)/10, 0.1+float64(i%5)/10, p/4, p%4)
		}
		b.WriteString(`]},"openconfig-terminal-device:terminal-device":{"logical-channels":{"channel":[`)
		for p := range ports {
			if p > 0 {
				b.WriteByte(',')
			}
			i := d*ports + p
			fmt.Fprintf(&b, `{"index":%d,"logical-channel-assignments":{"assignment":[{"index":1,"state":{"assignment-type":"OPTICAL_CHANNEL",`+
				`"index":1,"optical-channel":"NE%03d-1/%d/C1"}}]},"otn":{"state":{"esnr":{"instant":%.2f},"fec-uncorrectable-blocks":"%d",`+
				`"post-fec-ber":{"instant":"0"},"pre-fec-ber":{"instant":"%.3g"},"q-value":{"instant":%.2f}}},`+
				`"state":{"description":"line NE%03d-1/%d/C1","index":%d,"logical-channel-type":"openconfig-transport-types:PROT_OTN"}}`,
				p+1, p/4, p%4, 15+float64(i%400)/100, i%3, 1e-3+float64(i%97)*1e-5, 9+float64(i%300)/100, p/4, p%4, p+1)
		}
		fmt.Fprintf(&b, "]}},\"timestamp\":%q}\n", t0.Add(time.Duration(d)*time.Minute).Format(time.RFC3339))
	}
	return b.Bytes()
}

var benchOCData = sync.OnceValue(func() []byte { return benchOpenConfig(50, 700) })

// BenchmarkParseOpenConfig is one worker's parse of a block of OpenConfig documents (no
// reading, hashing or merging): the one-pass reader and the OpenConfig records alone.
// cpu-ns/op is the process's CPU time per parse, steadier than the wall time on a shared
// machine. BenchmarkParseOpenConfigTree is the same with the tree reader.
func BenchmarkParseOpenConfig(b *testing.B)     { benchParseOpenConfig(b, true) }
func BenchmarkParseOpenConfigTree(b *testing.B) { benchParseOpenConfig(b, false) }

func benchParseOpenConfig(b *testing.B, onePass bool) {
	data := benchOCData()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	jp := &jsonParser{file: "bench.json", stat: "instant", mode: jsonModeLines, onePass: onePass}
	job := new(csvJob)
	cpu0 := cpuTime()
	for b.Loop() {
		*job = csvJob{data: data, firstLine: 1, names: job.names[:0], rowPort: job.rowPort[:0], times: job.times[:0],
			vals: job.vals[:0], rowMask: job.rowMask[:0], groupEnd: job.groupEnd[:0], spread: job.spread[:0],
			gTimes: job.gTimes[:0], gVals: job.gVals[:0], gMask: job.gMask[:0], gOff: job.gOff[:0]}
		jp.parse(job)
		if job.nReject != 0 || len(job.times) != 50*700 {
			b.Fatalf("%d rejected, %d rows", job.nReject, len(job.times))
		}
	}
	b.ReportMetric(float64(cpuTime()-cpu0)/float64(b.N), "cpu-ns/op")
}

// cpuTime is the CPU time (user and system) the process has used, in nanoseconds.
func cpuTime() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// BenchmarkParseCSVRows is the per-row parse alone (csvParser.row on every line of
// BenchmarkReadCSV's data, in blocks of 4096 rows): no reading, hashing, grouping or merging.
// Reported per row, in wall and in CPU time.
func BenchmarkParseCSVRows(b *testing.B) {
	data := benchData()
	nl := bytes.IndexByte(data, '\n')
	lay, _, err := parseHeader("bench.csv", 1, data[:nl])
	if err != nil {
		b.Fatal(err)
	}
	lines := bytes.Split(bytes.TrimSuffix(data[nl+1:], []byte("\n")), []byte("\n"))
	job := &csvJob{}
	b.SetBytes(int64(len(data) - nl - 1))
	b.ReportAllocs()
	cpu0 := cpuTime()
	for b.Loop() {
		if pe := parseRowsOnce(lay, job, lines); pe != nil {
			b.Fatal(pe)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(lines)), "ns/row")
	b.ReportMetric(float64(cpuTime()-cpu0)/float64(b.N)/float64(len(lines)), "cpu-ns/row")
}

// parseRowsOnce parses lines (data rows from line 2 on) as blocks of 4096 rows; a function of
// its own so that an instruction-count profiler can count it alone.
func parseRowsOnce(lay *csvLayout, job *csvJob, lines [][]byte) *ParseError {
	const blockRows = 4096
	cp := &csvParser{file: "bench.csv", lay: lay}
	for i, ln := range lines {
		if i%blockRows == 0 {
			cp.startBlock()
			job.names, job.rowPort, job.times, job.vals = job.names[:0], job.rowPort[:0], job.times[:0], job.vals[:0]
		}
		if pe := cp.row(job, ln, i+2); pe != nil {
			return pe
		}
	}
	return nil
}
