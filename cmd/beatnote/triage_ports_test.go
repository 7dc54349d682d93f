package main

import (
	"bytes"
	"fmt"
	"os"
	"sync"
	"testing"
)

// The spill gives back what was put, from many goroutines, in a temporary file that is gone
// from its folder as soon as it is made, and in memory when no temporary file can be made.
func TestSpillGivesBackWhatWasPut(t *testing.T) {
	dir := t.TempDir()
	t.Setenv("TMPDIR", dir)
	inFile := newSpill()
	if inFile.f == nil {
		t.Fatal("no temporary file")
	}
	if left, _ := os.ReadDir(dir); len(left) != 0 {
		t.Errorf("the temporary file is still in its folder: %v", left)
	}
	t.Setenv("TMPDIR", "/nonexistent/folder")
	inMemory := newSpill()
	if inMemory.f != nil {
		t.Fatal("a temporary file in a folder that does not exist")
	}
	for name, s := range map[string]*spill{"file": inFile, "memory": inMemory} {
		const n = 500
		refs := make([]spillRef, n)
		var wg sync.WaitGroup
		for g := 0; g < 4; g++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for i := g; i < n; i += 4 {
					r, err := s.put(bytes.Repeat([]byte(fmt.Sprint(i, ";")), i%37))
					if err != nil {
						t.Error(err)
					}
					refs[i] = r
				}
			}()
		}
		wg.Wait()
		var buf []byte
		for i := n - 1; i >= 0; i-- {
			var err error
			if buf, err = s.get(refs[i], buf); err != nil {
				t.Fatal(err)
			}
			if want := bytes.Repeat([]byte(fmt.Sprint(i, ";")), i%37); !bytes.Equal(buf, want) {
				t.Fatalf("%s: put %d gave back %q, want %q", name, i, buf, want)
			}
		}
		if _, err := s.get(spillRef{off: s.size, n: 1}, nil); err == nil {
			t.Errorf("%s: a reference past the end read something", name)
		}
		s.close()
	}
}
