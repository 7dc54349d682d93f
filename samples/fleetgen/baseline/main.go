// Command baseline is the yardstick of samples/bench.sh: it reads CSV files with encoding/csv
// (ReuseRecord = true) and parses every field but the first two (time and port) with
// strconv.ParseFloat, doing nothing else. samples/bench.sh times `beatnote triage` against it.
//
//	go run ./samples/fleetgen/baseline out/fleet.csv
//	go run ./samples/fleetgen/baseline out/fleet-files   # every *.csv in the folder
//
// It prints the rows and fields read and the count of fields that did not parse as numbers (the
// empty ones), so the compiler cannot drop the work.
package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
)

func main() {
	if len(os.Args) < 2 {
		fmt.Fprintln(os.Stderr, "usage: baseline FILE|FOLDER...")
		os.Exit(2)
	}
	var rows, fields, bad int
	var sum float64
	for _, p := range os.Args[1:] {
		files, err := expand(p)
		if err != nil {
			fmt.Fprintln(os.Stderr, "baseline:", err)
			os.Exit(2)
		}
		for _, f := range files {
			r, fl, b, s, err := readOne(f)
			if err != nil {
				fmt.Fprintln(os.Stderr, "baseline:", err)
				os.Exit(2)
			}
			rows, fields, bad, sum = rows+r, fields+fl, bad+b, sum+s
		}
	}
	fmt.Printf("rows %d, numeric fields %d, not numbers %d, checksum %g\n", rows, fields, bad, sum)
}

// expand lists p itself, or the *.csv files in folder p in lexical order.
func expand(p string) ([]string, error) {
	fi, err := os.Stat(p)
	if err != nil {
		return nil, err
	}
	if !fi.IsDir() {
		return []string{p}, nil
	}
	files, err := filepath.Glob(filepath.Join(p, "*.csv"))
	sort.Strings(files)
	return files, err
}

// readOne reads one CSV file: header, then every record, ParseFloat on fields 2….
func readOne(name string) (rows, fields, bad int, sum float64, err error) {
	f, err := os.Open(name)
	if err != nil {
		return 0, 0, 0, 0, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.ReuseRecord = true
	if _, err := r.Read(); err != nil { // header
		return 0, 0, 0, 0, fmt.Errorf("%s: %w", name, err)
	}
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return rows, fields, bad, sum, fmt.Errorf("%s: %w", name, err)
		}
		rows++
		for _, s := range rec[2:] {
			fields++
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				bad++
				continue
			}
			sum += v
		}
	}
	return rows, fields, bad, sum, nil
}
