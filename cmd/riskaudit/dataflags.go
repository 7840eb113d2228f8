package main

import (
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
)

// dataFlags are the flags that say how to read a cohort file.
type dataFlags struct {
	delimiter    string
	decimalComma bool
	missing      string
	naValues     []string
	format       string
	rename       []string
	sheet        string
}

func (f *dataFlags) register(fs *pflag.FlagSet) {
	fs.StringVar(&f.delimiter, "delimiter", "", "field delimiter: comma, semicolon, tab, or one character (default: detected from the header)")
	fs.BoolVar(&f.decimalComma, "decimal-comma", false, "read numbers written with a decimal comma, such as 27,5")
	fs.StringVar(&f.missing, "missing", "complete-case", "missing-value policy: complete-case (leave out rows missing a model column) or fail")
	fs.StringSliceVar(&f.naValues, "na-values", nil, "field values that mean missing, comma-separated (default: empty, NA, ., NaN)")
	fs.StringVar(&f.format, "format", "auto", "input file format: csv (delimited text), parquet, arrow (Arrow IPC file), xlsx (Excel workbook), or auto (columnar files and workbooks are recognised by their first bytes)")
	fs.StringVar(&f.sheet, "sheet", "", "worksheet to read from an Excel workbook, by name (default: the first worksheet); other formats ignore it")
	fs.StringArrayVar(&f.rename, "rename", nil, "read the file's column OLD as NEW, written OLD=NEW (repeat for each column; in audit --plan, added to the plan's renames)")
}

// options returns how to read the files and whether a missing value is
// an error (the --missing policy).
func (f *dataFlags) options() (o cohort.Options, fail bool, err error) {
	if o.Delimiter, err = cohort.ParseDelimiter(f.delimiter); err != nil {
		return o, false, usagef("--delimiter %v", err)
	}
	switch f.format {
	case "auto", "":
	case "csv", "parquet", "arrow", "xlsx":
		o.Format = f.format
	default:
		return o, false, usagef("--format %q: give csv, parquet, arrow, xlsx or auto", f.format)
	}
	o.Sheet = f.sheet
	if o.DecimalComma = f.decimalComma; o.DecimalComma && o.Delimiter == ',' {
		return o, false, usagef("--decimal-comma needs a delimiter other than a comma")
	}
	if f.naValues != nil {
		o.Missing = append([]string{}, f.naValues...)
	}
	if o.Rename, err = parseRenames(f.rename); err != nil {
		return o, false, err
	}
	switch f.missing {
	case "complete-case":
		return o, false, nil
	case "fail":
		return o, true, nil
	}
	return o, false, usagef("--missing %q: give complete-case or fail", f.missing)
}

// now returns the current time in UTC, or the time in SOURCE_DATE_EPOCH
// (seconds since 1970) when it is set, so that outputs can be made
// reproducible.
func now() time.Time {
	if v := os.Getenv("SOURCE_DATE_EPOCH"); v != "" {
		var sec int64
		if _, err := fmt.Sscan(v, &sec); err == nil {
			return time.Unix(sec, 0).UTC()
		}
	}
	return time.Now().UTC()
}

// checkOutputs refuses, before any work, output files that exist and are
// not regular files, two outputs at one path, and an output that is an
// input; empty paths are skipped.
func checkOutputs(outs []string, inputs ...string) error {
	seen := map[string]bool{}
	for _, out := range outs {
		if out == "" {
			continue
		}
		if err := atomicfile.CheckTarget(out, false); err != nil {
			return err
		}
		if err := audit.CheckNotInput(out, inputs...); err != nil {
			return err
		}
		abs, _ := filepath.Abs(out)
		if seen[abs] {
			return usagef("two outputs are the same file %s: give each its own path", out)
		}
		seen[abs] = true
	}
	return nil
}
