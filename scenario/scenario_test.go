package scenario

import (
	"bytes"
	"crypto/sha256"
	"testing"
)

func TestDeterministic(t *testing.T) {
	a, b := Development.CSV(), Development.CSV()
	if !bytes.Equal(a, b) {
		t.Fatal("two runs differ")
	}
	lines := bytes.Count(a, []byte("\n"))
	if lines != Development.Rows+1 {
		t.Fatalf("%d lines", lines)
	}
	t.Logf("development extract sha256 %x", sha256.Sum256(a))
}

func TestEventRateIsPlausible(t *testing.T) {
	data := Development.CSV()
	events := bytes.Count(data, []byte(",yes\n"))
	rate := float64(events) / float64(Development.Rows)
	if rate < 0.05 || rate > 0.25 {
		t.Errorf("event rate %.3f is outside the scenario's intended 5%%–25%%", rate)
	}
}
