package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"strings"
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
	switch strings.ToLower(f.delimiter) {
	case "":
	case "comma", ",":
		o.Delimiter = ','
	case "semicolon", ";":
		o.Delimiter = ';'
	case "tab", `\t`, "\t":
		o.Delimiter = '\t'
	default:
		if len(f.delimiter) != 1 || f.delimiter == `"` || f.delimiter == "\n" || f.delimiter == "\r" {
			return o, usagef("--delimiter %q: give comma, semicolon, tab or one character other than a quote or line end", f.delimiter)
		}
		o.Delimiter = f.delimiter[0]
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

// fileSHA256 returns the hex SHA-256 of the file at path.
func fileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("cannot read %s: %w", path, err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("cannot read %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
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

// checkNotInput refuses an output path that names one of the inputs:
// input files are never modified.
func checkNotInput(out string, inputs ...string) error {
	if out == "" {
		return nil
	}
	ost, err := os.Stat(out)
	if err != nil {
		return nil
	}
	for _, in := range inputs {
		if in == "" {
			continue
		}
		if ist, err := os.Stat(in); err == nil && os.SameFile(ost, ist) {
			return usagef("the output %s is the input %s: inputs are never overwritten; choose another output path", out, in)
		}
	}
	return nil
}
