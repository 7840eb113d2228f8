package scenario

import (
	"bytes"
	"strconv"
	"testing"
)

func TestMissingStacked(t *testing.T) {
	ms := LaterMissing
	inc := parseTable(ms.Incomplete())
	st := parseTable(ms.Stacked())
	if len(st.rows) != ms.M*len(inc.rows) {
		t.Fatalf("%d stacked rows, want %d × %d", len(st.rows), ms.M, len(inc.rows))
	}
	if !bytes.Equal(ms.Stacked(), ms.Stacked()) {
		t.Fatal("two runs differ")
	}
	bmi, alb := inc.col("bmi"), inc.col("albumin")
	missing := 0
	for _, r := range inc.rows {
		if r[bmi] == "NA" || r[alb] == "NA" {
			missing++
		}
	}
	share := float64(missing) / float64(len(inc.rows))
	if share < 0.12 || share > 0.35 {
		t.Errorf("%.3f of the rows have a missing value, outside the intended 12%%–35%%", share)
	}
	// Every completed value is a number in range, observed values are
	// kept, and the imputations differ.
	sb, sa := st.col("bmi"), st.col("albumin")
	differ := 0
	n := len(inc.rows)
	for j := 0; j < ms.M; j++ {
		for i, r := range inc.rows {
			s := st.rows[j*n+i]
			if s[0] != strconv.Itoa(j+1) {
				t.Fatalf("row %d of imputation %d is numbered %s", i, j+1, s[0])
			}
			for _, c := range []struct{ in, out int }{{bmi, sb}, {alb, sa}} {
				v, err := strconv.ParseFloat(s[c.out], 64)
				if err != nil || v < 15 || v > 55 {
					t.Fatalf("imputation %d row %d: %q", j+1, i, s[c.out])
				}
				if r[c.in] != "NA" && r[c.in] != s[c.out] {
					t.Fatalf("observed value %s changed to %s", r[c.in], s[c.out])
				}
				if j > 0 && r[c.in] == "NA" && s[c.out] != st.rows[i][c.out] {
					differ++
				}
			}
		}
	}
	if differ == 0 {
		t.Error("no imputed value differs between imputations")
	}
	t.Logf("%d of %d rows incomplete; %d imputed values differ from imputation 1", missing, n, differ)
}
