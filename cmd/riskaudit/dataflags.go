package main

import (
	"fmt"
	"os"
	"time"

	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/cohort"
)

// dataFlags are the flags that say how to read a cohort file.
type dataFlags struct {
	delimiter    string
	decimalComma bool
	missing      string
	naValues     []string
	format       string
}

func (f *dataFlags) register(fs *pflag.FlagSet) {
	fs.StringVar(&f.delimiter, "delimiter", "", "field delimiter: comma, semicolon, tab, or one character (default: detected from the header)")
	fs.BoolVar(&f.decimalComma, "decimal-comma", false, "read numbers written with a decimal comma, such as 27,5")
	fs.StringVar(&f.missing, "missing", "complete-case", "missing-value policy: complete-case (leave out rows missing a model column) or fail")
	fs.StringSliceVar(&f.naValues, "na-values", nil, "field values that mean missing, comma-separated (default: empty, NA, ., NaN)")
	fs.StringVar(&f.format, "format", "auto", "cohort file format: csv (delimited text), parquet, arrow (Arrow IPC file), or auto (columnar files are recognised by their first bytes)")
}

func (f *dataFlags) cohortOptions() (cohort.Options, error) {
	var o cohort.Options
	var err error
	if o.Delimiter, err = cohort.ParseDelimiter(f.delimiter); err != nil {
		return o, usagef("--delimiter %v", err)
	}
	o.DecimalComma = f.decimalComma
	switch f.format {
	case "auto", "":
	case "csv", "parquet", "arrow":
		o.Format = f.format
	default:
		return o, usagef("--format %q: give csv, parquet, arrow or auto", f.format)
	}
	if o.DecimalComma && o.Delimiter == ',' {
		return o, usagef("--decimal-comma needs a delimiter other than a comma")
	}
	if f.naValues != nil {
		o.Missing = append([]string{}, f.naValues...)
	}
	return o, nil
}

// options returns how to read the files and whether a missing value is
// an error.
func (f *dataFlags) options() (cohort.Options, bool, error) {
	copt, err := f.cohortOptions()
	if err != nil {
		return copt, false, err
	}
	fail, err := f.failOnMissing()
	return copt, fail, err
}

func (f *dataFlags) failOnMissing() (bool, error) {
	switch f.missing {
	case "complete-case":
		return false, nil
	case "fail":
		return true, nil
	}
	return false, usagef("--missing %q: give complete-case or fail", f.missing)
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
