package sign

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"

	"github.com/beatnote/beatnote/rules"
)

// ErrChangedWhileRead is wrapped when a file grew or shrank while it was being hashed.
var ErrChangedWhileRead = errors.New("changed while it was being read")

// FileSHA256 is the lowercase hex SHA-256 of the regular file at path. It reads exactly the
// size the file had when opened, so a file that keeps growing cannot make it run forever: one
// that grew or shrank meanwhile is an error wrapping ErrChangedWhileRead.
func FileSHA256(path string) (string, error) {
	f, fi, err := rules.OpenRegular(path)
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
