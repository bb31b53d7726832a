package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestWriteReplaces(t *testing.T) {
	path := filepath.Join(t.TempDir(), "out.txt")
	for _, want := range []string{"first\n", "second\n"} {
		if err := Write(path, func(w io.Writer) error { _, err := io.WriteString(w, want); return err }); err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if string(got) != want {
			t.Errorf("file holds %q, want %q", got, want)
		}
	}
}

func TestWriteFailureLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(path, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("Write error = %v, want boom", err)
	}
	got, _ := os.ReadFile(path)
	if string(got) != "old" {
		t.Errorf("target changed to %q after a failed write", got)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries after a failed write, want 1 (no temporary file left)", len(entries))
	}
}

func TestWriteDir(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "out")
	err := WriteDir(dir, func(tmp string) error {
		return os.WriteFile(filepath.Join(tmp, "a.txt"), []byte("a"), 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(filepath.Join(dir, "a.txt")); string(got) != "a" {
		t.Errorf("a.txt holds %q", got)
	}
	// Not empty now: refused, nothing changed.
	boom := errors.New("boom")
	if err := WriteDir(dir, func(string) error { return boom }); err == nil || errors.Is(err, boom) {
		t.Errorf("WriteDir onto a non-empty directory: %v, want a refusal before fill", err)
	}
	// A failing fill leaves no temporary directory.
	if err := WriteDir(filepath.Join(parent, "other"), func(tmp string) error {
		os.WriteFile(filepath.Join(tmp, "b.txt"), []byte("b"), 0o644)
		return boom
	}); !errors.Is(err, boom) {
		t.Errorf("WriteDir error %v, want boom", err)
	}
	entries, _ := os.ReadDir(parent)
	if len(entries) != 1 {
		t.Errorf("parent holds %d entries, want 1", len(entries))
	}
}

func TestCheck(t *testing.T) {
	dir := t.TempDir()
	if err := Check(filepath.Join(dir, "new.txt")); err != nil {
		t.Errorf("Check(new file) = %v, want nil", err)
	}
	if err := Check(dir); !errors.Is(err, ErrNotRegular) {
		t.Errorf("Check(directory) = %v, want ErrNotRegular", err)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("Check created %d entries", len(entries))
	}
}
