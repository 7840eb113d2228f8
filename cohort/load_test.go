package cohort

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

func num(names ...string) []Request {
	r := make([]Request, len(names))
	for i, n := range names {
		r[i] = Request{Name: n, Kind: Numeric}
	}
	return r
}

func TestParseDialects(t *testing.T) {
	tests := []struct {
		name string
		data string
		opt  Options
		want []float64 // column "x"
		cat  []string  // column "g", "" for missing
	}{
		{"comma", "x,g\n1,a\n2.5,b\n", Options{}, []float64{1, 2.5}, []string{"a", "b"}},
		{"crlf", "x,g\r\n1,a\r\n2,b\r\n", Options{}, []float64{1, 2}, []string{"a", "b"}},
		{"no final newline", "x,g\n1,a\n2,b", Options{}, []float64{1, 2}, []string{"a", "b"}},
		{"bom", "\xef\xbb\xbfx,g\n1,a\n", Options{}, []float64{1}, []string{"a"}},
		{"tab", "x\tg\n1\ta\n-3e2\tb\n", Options{}, []float64{1, -300}, []string{"a", "b"}},
		{"semicolon decimal comma", "x;g\n27,5;a\n3;b\n", Options{DecimalComma: true}, []float64{27.5, 3}, []string{"a", "b"}},
		{"quoted header and fields", "\"x\",\"g\"\n\"1\",\"a,b\"\n2,\"say \"\"hi\"\"\"\n", Options{}, []float64{1, 2}, []string{"a,b", `say "hi"`}},
		{"quoted newline", "x,g\n1,\"two\nlines\"\n2,c\n", Options{}, []float64{1, 2}, []string{"two\nlines", "c"}},
		{"quoted crlf ends", "x,g\r\n1,\"a\"\r\n2,\"b\"\r\n", Options{}, []float64{1, 2}, []string{"a", "b"}},
		{"missing tokens", "x,g\nNA,.\n,NaN\n 4 , d \n", Options{}, []float64{math.NaN(), math.NaN(), 4}, []string{"", "", "d"}},
		{"custom missing", "x,g\n-99,a\nNA,b\n", Options{Missing: []string{"-99"}}, []float64{math.NaN(), 0}, nil},
		{"blank lines skipped", "x,g\n\n1,a\n\r\n2,b\n\n", Options{}, []float64{1, 2}, []string{"a", "b"}},
		{"forced delimiter", "x|g\n1|a\n", Options{Delimiter: '|'}, []float64{1}, []string{"a"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			reqs := []Request{{Name: "x", Kind: Numeric}}
			if tt.cat != nil {
				reqs = append(reqs, Request{Name: "g", Kind: Categorical})
			}
			if tt.name == "custom missing" {
				reqs = []Request{{Name: "x", Kind: Numeric}, {Name: "g", Kind: Categorical}}
			}
			fr, err := Parse("t.csv", []byte(tt.data), reqs, tt.opt)
			if tt.name == "custom missing" {
				// NA is no longer missing, so it is a bad number.
				if err == nil || !strings.Contains(err.Error(), `line 3, column "x": value "NA": not a number`) {
					t.Fatalf("want a bad-number error, got %v", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			x := fr.Column("x").Num
			if len(x) != len(tt.want) {
				t.Fatalf("got %d rows, want %d", len(x), len(tt.want))
			}
			for i := range x {
				if !(x[i] == tt.want[i] || math.IsNaN(x[i]) && math.IsNaN(tt.want[i])) {
					t.Errorf("x[%d] = %v, want %v", i, x[i], tt.want[i])
				}
			}
			if tt.cat != nil {
				g := fr.Column("g")
				for i, want := range tt.cat {
					got := ""
					if g.Codes[i] >= 0 {
						got = g.Levels[g.Codes[i]]
					}
					if got != want {
						t.Errorf("g[%d] = %q, want %q", i, got, want)
					}
				}
			}
		})
	}
}

func TestLinesAndRecords(t *testing.T) {
	data := "x,g\n1,\"a\nb\"\n\n2,c\r\n3,d"
	fr, err := Parse("t.csv", []byte(data), num("x"), Options{KeepRecords: true})
	if err != nil {
		t.Fatal(err)
	}
	wantLines := []int{2, 5, 6}
	wantRec := []string{"1,\"a\nb\"", "2,c", "3,d"}
	for i := range wantLines {
		if fr.Line(i) != wantLines[i] {
			t.Errorf("Line(%d) = %d, want %d", i, fr.Line(i), wantLines[i])
		}
		if string(fr.Record(i)) != wantRec[i] {
			t.Errorf("Record(%d) = %q, want %q", i, fr.Record(i), wantRec[i])
		}
	}
	if string(fr.HeaderRecord()) != "x,g" {
		t.Errorf("header record %q", fr.HeaderRecord())
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		name, data string
		reqs       []Request
		opt        Options
		want       string
	}{
		{"empty", "", num("x"), Options{}, "t.csv: file is empty"},
		{"blank only", "\n\r\n  \n", num("x"), Options{}, "t.csv: file is empty"},
		{"header only", "x,y\n", num("x"), Options{}, "t.csv: the file has a header but no data rows"},
		{"absent column", "age,sex\n1,F\n", num("agee"), Options{}, `t.csv: column "agee": no such column (did you mean "age"?); columns present: "age", "sex"`},
		{"absent, nothing close", "age,sex\n1,F\n", num("weight"), Options{}, `t.csv: column "weight": no such column; columns present: "age", "sex"`},
		{"several absent", "Age,Sex,bmi\n1,F,2\n", num("age", "bmi", "sex", "weight", "age"), Options{}, `t.csv: column "age": no such column (did you mean "Age"?); also absent: "sex" (did you mean "Sex"?), "weight"; columns present: "Age", "Sex", "bmi"`},
		{"non-numeric", "x,y\n1,2\n3,abc\n", num("x", "y"), Options{}, `t.csv: line 3, column "y": value "abc": not a number`},
		{"decimal comma hint", "x;y\n1;2,5\n", num("y"), Options{}, `t.csv: line 2, column "y": value "2,5": not a number (written with a decimal comma? see --decimal-comma)`},
		{"missing marker hint", "x,y\n1,2\n3,NULL\n", num("x", "y"), Options{}, `t.csv: line 3, column "y": value "NULL": not a number (if it marks a missing value, list it with --na-values)`},
		{"missing marker hint, other case", "x\nn/a\n", num("x"), Options{}, `t.csv: line 2, column "x": value "n/a": not a number (if it marks a missing value, list it with --na-values)`},
		{"default marker taken out", "x\n1\nNA\n", num("x"), Options{Missing: []string{"-99"}}, `t.csv: line 3, column "x": value "NA": not a number (if it marks a missing value, list it with --na-values)`},
		{"infinite", "x\n1e400\n", num("x"), Options{}, `t.csv: line 2, column "x": value "1e400": not a number`},
		{"inf word", "x\nInf\n", num("x"), Options{}, `t.csv: line 2, column "x": value "Inf": not a number`},
		{"duplicate header", "x,y,x\n1,2,3\n", num("y"), Options{}, `t.csv: line 1, column "x": duplicate column name (fields 1 and 3 of the header)`},
		{"too many fields", "x,y\n1,2\n1,2,3\n", num("x"), Options{}, "t.csv: line 3: 3 fields, but the header has 2"},
		{"too few fields", "x,y\n1,2\n\n5\n", num("x"), Options{}, "t.csv: line 4: 1 fields, but the header has 2"},
		{"unterminated quote", "x,y\n1,\"abc\n2,3\n", num("x"), Options{}, "t.csv: line 2: a quoted field never ends"},
		{"junk after quote", "x,y\n1,\"ab\"c\n", num("x"), Options{}, `t.csv: line 2: unexpected 'c' after a closing quote`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("t.csv", []byte(tt.data), tt.reqs, tt.opt)
			if err == nil {
				t.Fatal("no error")
			}
			var ce *Error
			if !errors.As(err, &ce) {
				t.Fatalf("error %T is not *cohort.Error: %v", err, err)
			}
			if err.Error() != tt.want {
				t.Errorf("got  %s\nwant %s", err, tt.want)
			}
		})
	}
}

func TestLoadMissingFile(t *testing.T) {
	_, err := Load(filepath.Join(t.TempDir(), "nope.csv"), num("x"), Options{})
	if err == nil || !strings.Contains(err.Error(), "nope.csv: cannot read file: no such file or directory") {
		t.Fatalf("got %v", err)
	}
}

// TestParallelMatchesSerial checks that cutting a large file between
// workers changes nothing, including line numbers and level order.
func TestParallelMatchesSerial(t *testing.T) {
	data := synthCSV(50000, 3)
	reqs := []Request{{Name: "c0", Kind: Numeric}, {Name: "c2", Kind: Numeric}, {Name: "g", Kind: Categorical}}
	a, err := Parse("a", data, reqs, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Parse("b", data, reqs, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if a.Rows != b.Rows || a.Rows != 50000 {
		t.Fatalf("rows %d vs %d", a.Rows, b.Rows)
	}
	for i := 0; i < a.Rows; i++ {
		if a.Line(i) != b.Line(i) || a.Columns[0].Num[i] != b.Columns[0].Num[i] ||
			a.Columns[2].Levels[a.Columns[2].Codes[i]] != b.Columns[2].Levels[b.Columns[2].Codes[i]] {
			t.Fatalf("row %d differs", i)
		}
	}
	// An error in the second half reports its true line.
	bad := append([]byte(nil), data...)
	at := bytes.LastIndex(bad, []byte("\n"))
	at = bytes.LastIndex(bad[:at], []byte("\n"))
	bad = append(bad[:at+1], []byte("zz,1,2,a\n")...)
	_, err = Parse("b", bad, reqs, Options{Workers: 2})
	if err == nil || !strings.Contains(err.Error(), `line 50001, column "c0": value "zz"`) {
		t.Fatalf("got %v", err)
	}
}

// TestParseFloatMatchesStrconv compares the fast path with the standard
// library on random decimal strings.
func TestParseFloatMatchesStrconv(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	cases := []string{"0", "-0", "+1", "0.1", ".5", "5.", "1e5", "1E-5", "123456789012345678901234", "0.000000000000000000000001234",
		"9007199254740993", "4.9e-324", "1.7976931348623157e308", "00012.50"}
	for i := 0; i < 20000; i++ {
		v := r.NormFloat64() * math.Pow(10, float64(r.IntN(40)-20))
		cases = append(cases, strconv.FormatFloat(v, 'g', r.IntN(17)+1, 64), strconv.FormatFloat(v, 'f', r.IntN(8), 64))
	}
	for _, s := range cases {
		want, err := strconv.ParseFloat(s, 64)
		got, ok := parseFloat([]byte(s), '.')
		if (err == nil) != ok || ok && got != want {
			t.Fatalf("parseFloat(%q) = %v, %v; strconv gives %v, %v", s, got, ok, want, err)
		}
	}
	for _, s := range []string{"", "-", ".", "e5", "1e", "1e+", "1.2.3", "0x10", "1_000", "nan", "inf", "1,5", "--1"} {
		if _, ok := parseFloat([]byte(s), '.'); ok {
			t.Errorf("parseFloat(%q) accepted", s)
		}
	}
}

func TestSortLevels(t *testing.T) {
	got := []string{"10", "9", "1.5"}
	SortLevels(got)
	if fmt.Sprint(got) != "[1.5 9 10]" {
		t.Errorf("numeric sort: %v", got)
	}
	got = []string{"b", "A", "a"}
	SortLevels(got)
	if fmt.Sprint(got) != "[A a b]" {
		t.Errorf("string sort: %v", got)
	}
}

func TestClosest(t *testing.T) {
	names := []string{"age", "sex", "bmi_kg_m2"}
	for want, in := range map[string]string{"age": "Age", "bmi_kg_m2": "bmi_kgm2", "": "weight"} {
		if got := Closest(in, names); got != want {
			t.Errorf("Closest(%q) = %q, want %q", in, got, want)
		}
	}
}

// synthCSV writes rows of nnum numeric columns and one categorical column.
func synthCSV(rows, nnum int) []byte {
	r := rand.New(rand.NewPCG(7, 8))
	var b bytes.Buffer
	for j := 0; j < nnum; j++ {
		fmt.Fprintf(&b, "c%d,", j)
	}
	b.WriteString("g\n")
	buf := make([]byte, 0, 32)
	for i := 0; i < rows; i++ {
		for j := 0; j < nnum; j++ {
			buf = strconv.AppendFloat(buf[:0], math.Round(r.NormFloat64()*1000*10)/100, 'f', -1, 64)
			b.Write(buf)
			b.WriteByte(',')
		}
		b.WriteString([]string{"a", "b", "c"}[r.IntN(3)])
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// BenchmarkLoad1M reads a 1M-row, 9-column CSV (8 numeric columns and one
// categorical) from disk; the figure to watch is MB/s.
func BenchmarkLoad1M(b *testing.B) {
	data := synthCSV(1_000_000, 8)
	path := filepath.Join(b.TempDir(), "big.csv")
	if err := os.WriteFile(path, data, 0o600); err != nil {
		b.Fatal(err)
	}
	reqs := []Request{{Name: "g", Kind: Categorical}}
	for j := 0; j < 8; j++ {
		reqs = append(reqs, Request{Name: fmt.Sprintf("c%d", j), Kind: Numeric})
	}
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Load(path, reqs, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkParseFloat parses typical extract values (ns per value).
func BenchmarkParseFloat(b *testing.B) {
	vals := [][]byte{[]byte("27.5"), []byte("-1234.56"), []byte("0.08474"), []byte("140"), []byte("1001.0"), []byte("3.2e-4")}
	b.ResetTimer()
	s := 0.0
	for i := 0; i < b.N; i++ {
		v, _ := parseFloat(vals[i%len(vals)], '.')
		s += v
	}
	sink = s
}

var sink float64

// TestSplitMatchesNaive checks the eight-bytes-at-a-time splitter against
// a byte-by-byte one on random records.
func TestSplitMatchesNaive(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	alphabet := []byte("ab,;\"1.")
	sc := &scanner{delim: ','}
	for n := 0; n < 20000; n++ {
		rec := make([]byte, r.IntN(40))
		for i := range rec {
			rec[i] = alphabet[r.IntN(len(alphabet))]
		}
		ok := sc.split(rec)
		hasQuote := bytes.IndexByte(rec, '"') >= 0
		if ok == hasQuote {
			t.Fatalf("split(%q) = %v", rec, ok)
		}
		if !ok {
			continue
		}
		want := bytes.Split(rec, []byte{','})
		if len(want) != len(sc.fields) {
			t.Fatalf("split(%q): %d fields, want %d", rec, len(sc.fields), len(want))
		}
		for i := range want {
			if !bytes.Equal(want[i], sc.fields[i]) {
				t.Fatalf("split(%q) field %d = %q, want %q", rec, i, sc.fields[i], want[i])
			}
		}
	}
}

func TestRename(t *testing.T) {
	fr, err := Parse("t.csv", []byte("age_years,sex\n60,F\n"), []Request{{Name: "age", Kind: Numeric}},
		Options{Rename: map[string]string{"age_years": "age", "absent": "x"}})
	if err != nil {
		t.Fatal(err)
	}
	if fr.Column("age").Num[0] != 60 || fr.Header[0] != "age" {
		t.Errorf("rename not applied: %v", fr.Header)
	}
	// Only the rename of a name in the file is listed as applied.
	if want := []RenamedColumn{{From: "age_years", To: "age"}}; !reflect.DeepEqual(fr.Renamed, want) {
		t.Errorf("Renamed = %v, want %v", fr.Renamed, want)
	}
	_, err = Parse("t.csv", []byte("age_years,age\n60,61\n"), []Request{{Name: "age", Kind: Numeric}},
		Options{Rename: map[string]string{"age_years": "age"}})
	if err == nil || !strings.Contains(err.Error(), "duplicate column name") {
		t.Errorf("a rename onto an existing name should be a duplicate: %v", err)
	}
}

// TestMissingColumnSaysWhatFor: a column the user asked for beside the
// model's (a subgroup, the predicted risks) that the file lacks is named
// with what it was asked for, so the message says which flag to check.
func TestMissingColumnSaysWhatFor(t *testing.T) {
	_, err := Parse("v.csv", []byte("age,sex\n60,F\n"), []Request{{Name: "sexx", Kind: Categorical, For: "a subgroup column"}}, Options{})
	want := `v.csv: column "sexx": no such column, asked for as a subgroup column (did you mean "sex"?); columns present: "age", "sex"`
	if err == nil || err.Error() != want || !errors.Is(err, ErrNoColumn) {
		t.Errorf("got %v\nwant %s", err, want)
	}
}

// TestLinesWithGaps checks Frame.Line against the line numbers counted
// by splitting the text at line ends (the reference), for a file whose
// rows are all on consecutive lines (no line table is kept) and for the
// same rows with empty lines put in at random, read by one to three
// workers so that gaps fall inside a stretch and at the cuts.
func TestLinesWithGaps(t *testing.T) {
	data := synthCSV(60000, 2)
	r := rand.New(rand.NewPCG(21, 22))
	var gappy []byte
	for i, ln := range bytes.SplitAfter(data, []byte("\n")) {
		gappy = append(gappy, ln...)
		if i > 0 && r.IntN(5000) == 0 {
			gappy = append(gappy, "\n\r\n"[:1+r.IntN(3)]...)
		}
	}
	for name, text := range map[string][]byte{"dense": data, "gaps": gappy} {
		var want []int
		for i, ln := range bytes.Split(text, []byte("\n")) {
			if i > 0 && len(bytes.TrimSuffix(ln, []byte("\r"))) > 0 {
				want = append(want, i+1)
			}
		}
		for _, w := range []int{1, 2, 3} {
			fr, err := Parse(name, text, []Request{{Name: "c1", Kind: Numeric}}, Options{Workers: w})
			if err != nil {
				t.Fatal(err)
			}
			if fr.Rows != len(want) {
				t.Fatalf("%s, %d workers: %d rows, want %d", name, w, fr.Rows, len(want))
			}
			for i, l := range want {
				if fr.Line(i) != l {
					t.Fatalf("%s, %d workers: Line(%d) = %d, want %d", name, w, i, fr.Line(i), l)
				}
			}
			if name == "dense" && fr.lines != nil {
				t.Errorf("dense, %d workers: a line table of %d rows was kept", w, len(fr.lines))
			}
		}
	}
}
