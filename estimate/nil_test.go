package estimate

import (
	"bytes"
	"strings"
	"testing"
)

// TestWriteCSVNil checks that WriteCSV returns an error for nil records and
// writes nothing, instead of a nil-pointer panic.
func TestWriteCSVNil(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteCSV(&buf, nil); err == nil || !strings.Contains(err.Error(), "nil records") {
		t.Errorf("WriteCSV(nil): err = %v", err)
	}
	if buf.Len() != 0 {
		t.Errorf("WriteCSV(nil) wrote %q", buf.String())
	}
}
