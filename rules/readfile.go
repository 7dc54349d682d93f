package rules

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"syscall"
)

// MaxConfigBytes bounds every plan, port-map, rules and profiles file: 16 MiB is far above any
// real one (a port map of 100 000 ports is about 8 MiB), and a bound keeps a wrong path — a
// multi-gigabyte log given as --plan — from exhausting memory.
const MaxConfigBytes = 16 << 20

// ErrTooLarge is wrapped by the error of a read above its limit (ReadRegular, ReadConfig).
var ErrTooLarge = errors.New("file too large")

// ErrNotRegular is wrapped by the error of OpenRegular, ReadRegular and ReadConfig when the path
// names something other than a regular file: a folder, a device such as /dev/zero, a FIFO or a
// socket. Reading one could hang (a FIFO without a writer), never end (/dev/zero) or mean
// nothing (a folder).
var ErrNotRegular = errors.New("not a regular file")

// OpenRegular opens path for reading only when it is a regular file. The open does not block
// (O_NONBLOCK: a FIFO without a writer would otherwise hang the open itself), and the type is
// checked on the opened file, so that a path swapped between a check and the open cannot slip
// through. Its errors are *fs.PathError.
func OpenRegular(path string) (*os.File, fs.FileInfo, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, nil, err
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, nil, err
	}
	if !fi.Mode().IsRegular() {
		f.Close()
		return nil, fi, &fs.PathError{Op: "open", Path: path, Err: fmt.Errorf("%w (%s)", ErrNotRegular, fileKind(fi.Mode()))}
	}
	return f, fi, nil
}

// fileKind names what a file that is not regular is, for messages.
func fileKind(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a folder"
	case m&fs.ModeNamedPipe != 0:
		return "a FIFO"
	case m&fs.ModeCharDevice != 0, m&fs.ModeDevice != 0:
		return "a device"
	case m&fs.ModeSocket != 0:
		return "a socket"
	}
	return "not a plain file"
}

// ReadRegular reads the whole regular file at path (see OpenRegular), which may hold at most
// limit bytes, and returns its bytes and its file information. A larger file is an error
// wrapping ErrTooLarge. Its errors are *fs.PathError.
func ReadRegular(path string, limit int64) ([]byte, fs.FileInfo, error) {
	f, fi, err := OpenRegular(path)
	if err != nil {
		return nil, fi, err
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, fi, &fs.PathError{Op: "read", Path: path, Err: err}
	}
	if int64(len(data)) > limit {
		return nil, fi, &fs.PathError{Op: "read", Path: path, Err: fmt.Errorf("%w: more than %d bytes", ErrTooLarge, limit)}
	}
	return data, fi, nil
}

// ReadConfig reads the configuration file at path, at most MaxConfigBytes of it, and only when
// it is a regular file, so that a device (/dev/zero), a FIFO or a folder given by mistake fails
// with a clear error instead of hanging or exhausting memory. Its errors are *FileError naming
// path.
func ReadConfig(path string) ([]byte, error) {
	data, _, err := ReadRegular(path, MaxConfigBytes)
	switch {
	case errors.Is(err, ErrTooLarge):
		return nil, &FileError{File: path, Err: fmt.Errorf("%w: more than %d MiB, the limit for a plan, port map, rules or profiles file", ErrTooLarge, MaxConfigBytes>>20)}
	case errors.Is(err, ErrNotRegular):
		var pe *fs.PathError
		errors.As(err, &pe)
		return nil, &FileError{File: path, Err: pe.Err}
	case err != nil:
		return nil, &FileError{File: path, Err: err}
	}
	return data, nil
}
