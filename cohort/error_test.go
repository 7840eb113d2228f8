package cohort

import (
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// kinds are the sentinel errors of the package, for checking that an
// error has exactly one kind.
var kinds = []error{ErrRead, ErrFormat, ErrEmpty, ErrDuplicateColumn, ErrNoColumn, ErrNotNumber,
	ErrMissing, ErrOutcome, ErrLevel, ErrDomain}

// errorCase is a bad input, the kind of error it must give, and where
// that error must point.
type errorCase struct {
	name string
	// run reads the bad input; dir is a fresh folder for files.
	run  func(t *testing.T, dir string) error
	kind error
	// want holds the fields to compare: File (its base name), Line, Row,
	// Column, Value and HasValue.
	want Error
	// cause, when set, must be reachable by errors.Is through Err.
	cause error
	// wrapped says that Err must hold the reader's error, whose text
	// the message shows.
	wrapped bool
}

func parseErr(data string, reqs []Request, opt Options) func(*testing.T, string) error {
	return func(*testing.T, string) error {
		_, err := Parse("t.csv", []byte(data), reqs, opt)
		return err
	}
}

func loadErr(name string, reqs []Request, opt Options, write func(t *testing.T, path string)) func(*testing.T, string) error {
	return func(t *testing.T, dir string) error {
		path := filepath.Join(dir, name)
		if write != nil {
			write(t, path)
		}
		_, err := Load(path, reqs, opt)
		return err
	}
}

func writeBytes(data string) func(*testing.T, string) {
	return func(t *testing.T, path string) {
		if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// writeArrowTable writes one record of the given schema, filled by fill,
// as an Arrow IPC file; a nil fill writes no record at all.
func writeArrowTable(schema *arrow.Schema, fill func(b *array.RecordBuilder)) func(*testing.T, string) {
	return func(t *testing.T, path string) {
		t.Helper()
		f, err := os.Create(path)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		w, err := ipc.NewFileWriter(f, ipc.WithSchema(schema))
		if err != nil {
			t.Fatal(err)
		}
		if fill != nil {
			b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
			defer b.Release()
			fill(b)
			rec := b.NewRecord()
			defer rec.Release()
			if err := w.Write(rec); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
	}
}

var floatSchema = arrow.NewSchema([]arrow.Field{{Name: "x", Type: arrow.PrimitiveTypes.Float64}}, nil)

func errorCases() []errorCase {
	return []errorCase{
		{name: "missing CSV file", run: loadErr("nope.csv", num("x"), Options{}, nil),
			kind: ErrRead, want: Error{File: "nope.csv"}, cause: fs.ErrNotExist},
		{name: "missing file read whole", run: loadErr("nope.csv", num("x"), Options{KeepRecords: true}, nil),
			kind: ErrRead, want: Error{File: "nope.csv"}, cause: fs.ErrNotExist},
		{name: "missing Parquet file", run: loadErr("nope.parquet", num("x"), Options{Format: "parquet"}, nil),
			kind: ErrRead, want: Error{File: "nope.parquet"}, cause: fs.ErrNotExist},
		{name: "missing Arrow file", run: loadErr("nope.arrow", num("x"), Options{Format: "arrow"}, nil),
			kind: ErrRead, want: Error{File: "nope.arrow"}, cause: fs.ErrNotExist},
		{name: "a folder", run: func(t *testing.T, dir string) error {
			path := filepath.Join(dir, "sub.csv")
			if err := os.Mkdir(path, 0o755); err != nil {
				t.Fatal(err)
			}
			_, err := Load(path, num("x"), Options{})
			return err
		}, kind: ErrRead, want: Error{File: "sub.csv"}, wrapped: true},

		{name: "unterminated quote", run: parseErr("x,y\n1,\"abc\n2,3\n", num("x"), Options{}),
			kind: ErrFormat, want: Error{File: "t.csv", Line: 2}},
		{name: "text after a closing quote", run: parseErr("x,y\n1,\"ab\"c\n", num("x"), Options{}),
			kind: ErrFormat, want: Error{File: "t.csv", Line: 2}},
		{name: "quote error in the header", run: parseErr("\"x\n", num("x"), Options{}),
			kind: ErrFormat, want: Error{File: "t.csv", Line: 1}},
		{name: "too many fields", run: parseErr("x,y\n1,2\n1,2,3\n", num("x"), Options{}),
			kind: ErrFormat, want: Error{File: "t.csv", Line: 3}},
		{name: "damaged Parquet file", run: loadErr("bad.parquet", num("x"), Options{}, writeBytes("PAR1 not really Parquet PAR1")),
			kind: ErrFormat, want: Error{File: "bad.parquet"}, wrapped: true},
		{name: "damaged Arrow file", run: loadErr("bad.arrow", num("x"), Options{}, writeBytes("ARROW1 not really Arrow")),
			kind: ErrFormat, want: Error{File: "bad.arrow"}, wrapped: true},
		{name: "damaged Arrow file to append to", run: func(t *testing.T, dir string) error {
			path := filepath.Join(dir, "bad.arrow")
			writeBytes("ARROW1 not really Arrow")(t, path)
			_, err := AppendColumns(path, "arrow", []string{"s"}, [][]float64{{1}})
			return err
		}, kind: ErrFormat, want: Error{File: "bad.arrow"}, wrapped: true},
		{name: "columnar file where text rows are needed", run: loadErr("d.arrow", num("x"), Options{KeepRecords: true},
			writeArrowTable(floatSchema, func(b *array.RecordBuilder) { b.Field(0).(*array.Float64Builder).Append(1) })),
			kind: ErrFormat, want: Error{File: "d.arrow"}},
		{name: "nested column", run: loadErr("n.arrow", num("s"), Options{},
			writeArrowTable(arrow.NewSchema([]arrow.Field{{Name: "s", Type: arrow.ListOf(arrow.PrimitiveTypes.Float64)}}, nil),
				func(b *array.RecordBuilder) {
					lb := b.Field(0).(*array.ListBuilder)
					lb.Append(true)
					lb.ValueBuilder().(*array.Float64Builder).Append(1)
				})),
			kind: ErrFormat, want: Error{File: "n.arrow", Column: "s"}},

		{name: "empty file", run: parseErr("", num("x"), Options{}),
			kind: ErrEmpty, want: Error{File: "t.csv"}},
		{name: "blank lines only", run: parseErr("\n\r\n  \n", num("x"), Options{}),
			kind: ErrEmpty, want: Error{File: "t.csv"}},
		{name: "header only", run: parseErr("x,y\n", num("x"), Options{}),
			kind: ErrEmpty, want: Error{File: "t.csv"}},
		{name: "Arrow file without rows", run: loadErr("e.arrow", num("x"), Options{}, writeArrowTable(floatSchema, nil)),
			kind: ErrEmpty, want: Error{File: "e.arrow"}},

		{name: "duplicate header", run: parseErr("x,y,x\n1,2,3\n", num("y"), Options{}),
			kind: ErrDuplicateColumn, want: Error{File: "t.csv", Line: 1, Column: "x"}},
		{name: "rename onto a name present", run: parseErr("age_years,age\n60,61\n", num("age"), Options{Rename: map[string]string{"age_years": "age"}}),
			kind: ErrDuplicateColumn, want: Error{File: "t.csv", Line: 1, Column: "age"}},

		{name: "absent column", run: parseErr("age,sex\n1,F\n", num("agee"), Options{}),
			kind: ErrNoColumn, want: Error{File: "t.csv", Column: "agee"}},
		{name: "absent column of an Arrow file", run: loadErr("d.arrow", num("xx"), Options{},
			writeArrowTable(floatSchema, func(b *array.RecordBuilder) { b.Field(0).(*array.Float64Builder).Append(1) })),
			kind: ErrNoColumn, want: Error{File: "d.arrow", Column: "xx"}},

		{name: "text in a numeric column", run: parseErr("x,y\n1,2\n3,abc\n", num("x", "y"), Options{}),
			kind: ErrNotNumber, want: Error{File: "t.csv", Line: 3, Column: "y", Value: "abc", HasValue: true}},
		{name: "decimal comma without the option", run: parseErr("x;y\n1;2,5\n", num("y"), Options{}),
			kind: ErrNotNumber, want: Error{File: "t.csv", Line: 2, Column: "y", Value: "2,5", HasValue: true}},
		{name: "empty field that is not a marker", run: parseErr("x,y\n,1\n", num("x"), Options{Missing: []string{"NA"}}),
			kind: ErrNotNumber, want: Error{File: "t.csv", Line: 2, Column: "x", Value: "", HasValue: true}},
		{name: "computed NaN", run: parseErr("p\n0.5\nNaN\n", []Request{{Name: "p", Kind: Numeric, NaNIsError: true}}, Options{}),
			kind: ErrNotNumber, want: Error{File: "t.csv", Line: 3, Column: "p", Value: "NaN", HasValue: true}},
		{name: "infinite value in an Arrow file", run: loadErr("inf.arrow", num("x"), Options{},
			writeArrowTable(floatSchema, func(b *array.RecordBuilder) {
				b.Field(0).(*array.Float64Builder).AppendValues([]float64{1, math.Inf(1)}, nil)
			})),
			kind: ErrNotNumber, want: Error{File: "inf.arrow", Line: 2, Row: true, Column: "x", Value: "+Inf", HasValue: true}},
		{name: "column type without numbers", run: loadErr("d.arrow", num("d"), Options{},
			writeArrowTable(arrow.NewSchema([]arrow.Field{{Name: "d", Type: arrow.FixedWidthTypes.Date32}}, nil),
				func(b *array.RecordBuilder) { b.Field(0).(*array.Date32Builder).Append(1) })),
			kind: ErrNotNumber, want: Error{File: "d.arrow", Column: "d"}},
	}
}

// TestErrorKinds: every bad input gives an *Error that errors.Is finds
// with its kind and no other, that errors.As finds with the fields that
// point at the problem, and that keeps the error underneath.
func TestErrorKinds(t *testing.T) {
	for _, tc := range errorCases() {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.run(t, t.TempDir())
			if err == nil {
				t.Fatal("no error")
			}
			for _, k := range kinds {
				if got := errors.Is(err, k); got != (k == tc.kind) {
					t.Errorf("errors.Is(err, %v) = %v; err: %v", k, got, err)
				}
			}
			var ce *Error
			if !errors.As(err, &ce) {
				t.Fatalf("errors.As finds no *Error in %T: %v", err, err)
			}
			got := Error{File: filepath.Base(ce.File), Line: ce.Line, Row: ce.Row, Column: ce.Column, Value: ce.Value, HasValue: ce.HasValue}
			if got != tc.want {
				t.Errorf("fields %+v, want %+v", got, tc.want)
			}
			if tc.cause != nil && !errors.Is(err, tc.cause) {
				t.Errorf("errors.Is(err, %v) is false; Err = %#v", tc.cause, ce.Err)
			}
			if tc.cause == fs.ErrNotExist {
				var pe *fs.PathError
				if !errors.As(err, &pe) || filepath.Base(pe.Path) != tc.want.File {
					t.Errorf("errors.As finds no *fs.PathError for %s: %#v", tc.want.File, ce.Err)
				}
			}
			if (tc.wrapped || tc.cause != nil) && (ce.Err == nil || errors.Unwrap(err) != ce.Err) {
				t.Errorf("Err %v, Unwrap %v: the reader's error is lost", ce.Err, errors.Unwrap(err))
			}
			if tc.wrapped && !shows(ce.Msg, ce.Err) {
				t.Errorf("message %q does not show Err %q", ce.Msg, ce.Err)
			}
			if !tc.wrapped && tc.cause == nil && ce.Err != nil {
				t.Errorf("Err = %v for a problem found in the data", ce.Err)
			}
		})
	}
}

// TestErrorIs: the Is method matches the kind alone, and an Error of no
// kind matches none.
func TestErrorIs(t *testing.T) {
	e := &Error{File: "f", Msg: "m", Kind: ErrNoColumn}
	if !e.Is(ErrNoColumn) || e.Is(ErrNotNumber) || e.Is(nil) {
		t.Errorf("Is with Kind %v: ErrNoColumn %v, ErrNotNumber %v, nil %v", e.Kind, e.Is(ErrNoColumn), e.Is(ErrNotNumber), e.Is(nil))
	}
	var none error = &Error{File: "f", Msg: "m"}
	for _, k := range kinds {
		if errors.Is(none, k) {
			t.Errorf("an Error without a kind matches %v", k)
		}
	}
	// The kind and the message are independent: the message is Msg.
	if got := e.Error(); got != "f: m" {
		t.Errorf("Error() = %q", got)
	}
}

// shows reports whether msg contains the text of err or of an error it
// wraps.
func shows(msg string, err error) bool {
	for ; err != nil; err = errors.Unwrap(err) {
		if strings.Contains(msg, err.Error()) {
			return true
		}
	}
	return false
}
