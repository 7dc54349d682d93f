package sign

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"syscall"
)

// ErrNotRegular is wrapped by the errors of every read of this package whose path names
// something other than a regular file: a folder, a device such as /dev/zero, a FIFO or a
// socket. Reading one could hang (a FIFO without a writer), never end (/dev/zero) or mean
// nothing (a folder).
var ErrNotRegular = errors.New("not a regular file")

// ErrChangedWhileRead is wrapped when a file grew or shrank while it was being hashed.
var ErrChangedWhileRead = errors.New("changed while it was being read")

// ErrTooLarge is wrapped when a key, trusted-keys or signature file is larger than such a file
// can be.
var ErrTooLarge = errors.New("too large")

// openRegular opens path for reading only when it is a regular file. The open does not block
// (O_NONBLOCK: a FIFO without a writer would otherwise hang the open itself), and the type is
// checked on the opened file, so that a path swapped between a check and the open cannot slip
// through.
func openRegular(path string) (*os.File, fs.FileInfo, error) {
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
		return nil, fi, fmt.Errorf("%s: %w (%s)", path, ErrNotRegular, fileKind(fi.Mode()))
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

// readSmall reads the whole regular file at path, which may hold at most limit bytes (a key, a
// trusted-keys file or a signature file), and returns its bytes and its file information.
func readSmall(path string, limit int64) ([]byte, fs.FileInfo, error) {
	f, fi, err := openRegular(path)
	if err != nil {
		return nil, fi, err
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, fi, fmt.Errorf("%s: %w", path, err)
	}
	if int64(len(data)) > limit {
		return nil, fi, fmt.Errorf("%s: %w: more than %d bytes", path, ErrTooLarge, limit)
	}
	return data, fi, nil
}

// FileSHA256 is the lowercase hex SHA-256 of the regular file at path. It reads exactly the
// size the file had when opened, so a file that keeps growing cannot make it run forever: one
// that grew or shrank meanwhile is an error wrapping ErrChangedWhileRead.
func FileSHA256(path string) (string, error) {
	f, fi, err := openRegular(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.CopyN(h, f, fi.Size()); err != nil {
		if errors.Is(err, io.EOF) {
			err = ErrChangedWhileRead
		}
		return "", fmt.Errorf("%s: %w", path, err)
	}
	if n, _ := f.Read(make([]byte, 1)); n > 0 {
		return "", fmt.Errorf("%s: %w", path, ErrChangedWhileRead)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
