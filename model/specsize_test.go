package model

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReadSpecFileRefusesHuge: a file beyond MaxSpecSize (here a sparse
// file of zeros, as /dev/zero would give without end) is refused as
// unreadable without being read whole; one at the limit is read.
func TestReadSpecFileRefusesHuge(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		size    int64
		refused bool
	}{{MaxSpecSize + 1, true}, {MaxSpecSize, false}} {
		path := filepath.Join(dir, "spec.yaml")
		if err := os.WriteFile(path, nil, 0o600); err != nil {
			t.Fatal(err)
		}
		if err := os.Truncate(path, tc.size); err != nil {
			t.Fatal(err)
		}
		data, err := ReadSpecFile(path)
		if tc.refused {
			if !errors.Is(err, ErrSpecRead) || !strings.Contains(err.Error(), "is larger than 64 MiB") {
				t.Errorf("%d bytes: %v, want a refusal", tc.size, err)
			}
			continue
		}
		if err != nil || int64(len(data)) != tc.size {
			t.Errorf("%d bytes: read %d, %v", tc.size, len(data), err)
		}
	}
}
