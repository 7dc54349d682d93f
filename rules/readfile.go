package rules

import (
	"errors"
	"fmt"
	"io"
	"os"
)

// MaxConfigBytes bounds every plan, port-map, rules and profiles file: 16 MiB is far above any
// real one (a port map of 100 000 ports is about 8 MiB), and a bound keeps a wrong path —
// /dev/zero, a FIFO, a multi-gigabyte log given as --plan — from exhausting memory.
const MaxConfigBytes = 16 << 20

// ErrTooLarge is wrapped by the FileError of a configuration file above MaxConfigBytes.
var ErrTooLarge = errors.New("file too large")

// ReadConfig reads the configuration file at path, at most MaxConfigBytes of it, so that a
// device or a stream that never ends (/dev/zero) fails with a clear error instead of exhausting
// memory. Its errors are *FileError naming path.
func ReadConfig(path string) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, MaxConfigBytes+1))
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	if len(data) > MaxConfigBytes {
		return nil, &FileError{File: path, Err: fmt.Errorf("%w: more than %d MiB, the limit for a plan, port map, rules or profiles file", ErrTooLarge, MaxConfigBytes>>20)}
	}
	return data, nil
}
