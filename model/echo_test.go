package model

import (
	"fmt"
	"strings"
	"testing"
)

// TestSpecEchoesLittle: values of any length are cut in spec messages,
// and a data value of 10 MB in an outcome's values seen, which also end
// after ten.
func TestSpecEchoesLittle(t *testing.T) {
	long := strings.Repeat("z", 100_000)
	_, err := ParseSpec("s.yaml", []byte("outcome: {column: y, event: 1}\nintercept: "+long+"\npredictors: []\n"))
	if want := `s.yaml: line 2: intercept must be a finite number, not "` + long[:60] + `…" (100000 characters)`; err == nil || err.Error() != want {
		t.Errorf("got %.300v", err)
	}
	// A plain YAML key is at most 1024 characters long.
	_, err = ParseSpec("s.yaml", []byte("outcome: {column: y, event: 1}\n"+long[:1000]+": 1\npredictors: []\n"))
	if err == nil || len(err.Error()) > 300 || !strings.Contains(err.Error(), `unknown key "`+long[:60]+`…" (1000 characters) in the spec`) {
		t.Errorf("got %.300v", err)
	}
	recipe := "outcome: {column: y, event: yes, non_event: no}\npredictors: []\n"
	huge := strings.Repeat("q", 10_000_000)
	var csv strings.Builder
	csv.WriteString("y\nyes\nno\n" + huge + "\n")
	for i := range 12 {
		fmt.Fprintf(&csv, "v%d\n", i)
	}
	err = buildErr(recipe, csv.String(), Options{})(t)
	want := `c.csv: line 4, column "y": value "` + huge[:60] + `…" (10000000 characters): neither the event "yes" nor the non-event "no"; values seen: "yes", "no", "` +
		huge[:60] + `…" (10000000 characters), "v0", "v1", "v2", "v3", "v4", "v5", "v6", … and 5 more (the model names its outcome's codes: recode the column to them, or write the model's risks with 'riskaudit score' and audit that column with --predicted, --outcome and --event)`
	if err == nil || err.Error() != want {
		t.Errorf("got  %.400v\nwant %.400s", err, want)
	}
}
