package scenario

import (
	"bytes"
	"crypto/sha256"
	"strings"
	"testing"
	"time"
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

// row is one patient of a generated extract, by the columns the tests
// look at.
type row struct {
	event          bool
	hospital, date string
	fields         []string
}

func rows(t *testing.T, e Extract) []row {
	t.Helper()
	lines := strings.Split(strings.TrimSuffix(string(e.CSV()), "\n"), "\n")
	head := strings.Split(lines[0], ",")
	want := []string{"patient_ref", "age", "sex", "bmi", "smoker", "albumin", "op_minutes", "lung_disease", "ppc_30d", "hospital", "admission_date"}
	if strings.Join(head, ",") != strings.Join(want, ",") {
		t.Fatalf("header %v, want %v", head, want)
	}
	var out []row
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		if len(f) != len(want) {
			t.Fatalf("%d fields in %q", len(f), l)
		}
		out = append(out, row{event: f[8] == "yes", hospital: f[9], date: f[10], fields: f})
	}
	return out
}

func TestEventRateIsPlausible(t *testing.T) {
	events := 0
	for _, r := range rows(t, Development) {
		if r.event {
			events++
		}
	}
	rate := float64(events) / float64(Development.Rows)
	if rate < 0.05 || rate > 0.25 {
		t.Errorf("event rate %.3f is outside the scenario's intended 5%%–25%%", rate)
	}
}

// TestHospitalsAndDates checks the two columns the demo's analyses
// across hospitals and over time read: every hospital of the group has
// about its share, dates lie in the extract's span, and in the later
// extract the small community hospital has fewer than 10 events (so that
// the audit shows a cluster too small to pool).
func TestHospitalsAndDates(t *testing.T) {
	for _, e := range []Extract{Development, Later} {
		start, _ := time.Parse(time.DateOnly, e.Start)
		end := start.AddDate(0, 0, e.Days-1)
		n, ev := map[string]int{}, map[string]int{}
		first, last := "9999", ""
		for _, r := range rows(t, e) {
			n[r.hospital]++
			if r.event {
				ev[r.hospital]++
			}
			d, err := time.Parse(time.DateOnly, r.date)
			if err != nil || d.Before(start) || d.After(end) {
				t.Fatalf("%s: admission date %q outside %s to %s", e.Start, r.date, start.Format(time.DateOnly), end.Format(time.DateOnly))
			}
			first, last = min(first, r.date), max(last, r.date)
		}
		if len(n) != len(e.Hospitals) {
			t.Errorf("%s: %d hospitals in the extract, %d in the scenario", e.Start, len(n), len(e.Hospitals))
		}
		for _, h := range e.Hospitals {
			share := float64(n[h.Name]) / float64(e.Rows)
			if share < h.Share*0.7 || share > h.Share*1.3 {
				t.Errorf("%s: %s has %.3f of the patients, meant %.3f", e.Start, h.Name, share, h.Share)
			}
		}
		if e.Start == Later.Start && ev[hospCommunity] >= 10 {
			t.Errorf("%s: %s has %d events, meant to be too few to pool (under 10)", e.Start, hospCommunity, ev[hospCommunity])
		}
		if first > e.Start || last < end.AddDate(0, 0, -7).Format(time.DateOnly) {
			t.Errorf("%s: dates run from %s to %s, meant to span the year", e.Start, first, last)
		}
	}
}

// TestHospitalAndDateStreamApart checks that the hospital and the date
// come from a stream of their own: the development extract's other
// columns are those of the extract before the two columns were added
// (its first line below, from the generator of that version), and do
// not change with the hospitals' shares or the dates' span.
func TestHospitalAndDateStreamApart(t *testing.T) {
	other := Development
	other.Hospitals = []Hospital{{Name: "A", Share: 0.5}, {Name: "B", Share: 0.5}}
	other.Start, other.Days = "2020-03-01", 30
	a, b := rows(t, Development), rows(t, other)
	for i := range a {
		if x, y := strings.Join(a[i].fields[:9], ","), strings.Join(b[i].fields[:9], ","); x != y {
			t.Fatalf("patient %d: %q with the scenario's hospitals, %q with others", i+1, x, y)
		}
	}
	if got, want := strings.Join(a[0].fields[:9], ","), "OVH-000001,74,F,20.8,former,40.2,247,no,no"; got != want {
		t.Errorf("first patient %q, the extract before hospitals and dates had %q", got, want)
	}
}

// TestLaterDrifts checks the drift the demo shows: in the later extract
// complications are clearly more common from the drift day on, and more
// common in Vellmoor District than in Tarrowfield.
func TestLaterDrifts(t *testing.T) {
	start, _ := time.Parse(time.DateOnly, Later.Start)
	drift := start.AddDate(0, 0, Later.DriftDay).Format(time.DateOnly)
	var n, ev [2]int
	hn, hev := map[string]int{}, map[string]int{}
	for _, r := range rows(t, Later) {
		k := 0
		if r.date >= drift {
			k = 1
		}
		n[k]++
		hn[r.hospital]++
		if r.event {
			ev[k]++
			hev[r.hospital]++
		}
	}
	before, after := float64(ev[0])/float64(n[0]), float64(ev[1])/float64(n[1])
	if after < before*1.5 {
		t.Errorf("event rate %.3f before %s and %.3f from then: the drift is meant to be plain", before, drift, after)
	}
	rate := func(h string) float64 { return float64(hev[h]) / float64(hn[h]) }
	if rate(hospVellmoor) < rate(hospTarrow)*1.3 {
		t.Errorf("event rates %.3f in %s and %.3f in %s: meant to differ", rate(hospVellmoor), hospVellmoor, rate(hospTarrow), hospTarrow)
	}
}
