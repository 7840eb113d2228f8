package cohort

import (
	"errors"
	"math"
	"strconv"
	"time"
)

// maxCol and maxRow are the largest column (XFD) and row a worksheet
// has (ECMA-376 Part 1, §18.3.1.73 and Excel's specifications and limits).
const (
	maxCol = 16384
	maxRow = 1048576
)

// errCellRef is a cell reference that is not a column's letters followed
// by a row's number within the sheet's size.
var errCellRef = errors.New("not a cell reference")

// cellCoordinates reads a cell reference such as "D17" (letters in
// either case, "$" marks of an absolute reference allowed) as its
// 1-based column and row.
func cellCoordinates(ref string) (col, row int, err error) {
	i := 0
	if i < len(ref) && ref[i] == '$' {
		i++
	}
	start := i
	for ; i < len(ref); i++ {
		c := ref[i] | 0x20 // lower case
		if c < 'a' || c > 'z' {
			break
		}
		if col = col*26 + int(c-'a') + 1; col > maxCol {
			return 0, 0, errCellRef
		}
	}
	if i == start {
		return 0, 0, errCellRef
	}
	if i < len(ref) && ref[i] == '$' {
		i++
	}
	if i == len(ref) {
		return 0, 0, errCellRef
	}
	for ; i < len(ref); i++ {
		if ref[i] < '0' || ref[i] > '9' {
			return 0, 0, errCellRef
		}
		if row = row*10 + int(ref[i]-'0'); row > maxRow {
			return 0, 0, errCellRef
		}
	}
	if row == 0 {
		return 0, 0, errCellRef
	}
	return col, row, nil
}

// columnName is the letters of a 1-based column (1 is A, 27 is AA), or
// "" for a column outside 1 to maxCol.
func columnName(col int) string {
	if col < 1 || col > maxCol {
		return ""
	}
	var b [3]byte
	i := len(b)
	for col > 0 {
		col--
		i--
		b[i] = 'A' + byte(col%26)
		col /= 26
	}
	return string(b[i:])
}

// cellName is the reference of the cell at a 1-based column and row: D17.
func cellName(col, row int) string { return columnName(col) + strconv.Itoa(row) }

// serialTime is the time of serial date x (days and their fraction) in
// the workbook's date system, to the microsecond. The 1900 system
// counts 1 as 1900-01-01 and has the day 1900-02-29 that the calendar
// does not (serial 60, read as 1900-02-28 here): days from 1 March 1900
// on count from 1899-12-30, days before from 1899-12-31, and fractions
// below 1 are times on 1899-12-30. The 1904 system counts 0 as
// 1904-01-01. A time within half a millisecond of a second is that
// second.
func serialTime(x float64, date1904 bool) time.Time {
	epoch := time.Date(1899, time.December, 30, 0, 0, 0, 0, time.UTC)
	if date1904 {
		epoch = time.Date(1904, time.January, 1, 0, 0, 0, 0, time.UTC)
	}
	days := int(x)
	if days <= 61 {
		return earlySerialTime(x, date1904)
	}
	frac := x - float64(days) + 1e-9
	t := epoch.AddDate(0, 0, days).Add(time.Duration(24 * float64(time.Hour) * frac))
	if t.Nanosecond()/1e6 > 500 {
		return t.Round(time.Second)
	}
	return t.Truncate(time.Second)
}

// earlySerialTime is serialTime for serials up to 61, counted as
// Modified Julian Days (MJD 15018 is 1899-12-30 and 16480 is
// 1904-01-01) and turned into a calendar date by Fliegel and Van
// Flandern's algorithm (Communications of the ACM 11(10), 1968), the
// time of day rounded to the microsecond.
func earlySerialTime(x float64, date1904 bool) time.Time {
	offset := 15018.0
	if date1904 {
		offset = 16480.0
	}
	mjdDays, mjdFrac := math.Modf(x + offset)
	// The Julian day of MJD m is m + 2400000.5; a Julian day starts at noon.
	jd := int(mjdDays) + 2400000 + 1
	y, m, d := fliegelVanFlandern(jd)
	// The fraction goes through the half day of the Julian day's start.
	frac := 0.5 + mjdFrac - 0.5
	us := int64(24*float64(time.Hour)*frac+500) / 1e3
	t := time.Date(y, time.Month(m), d, 0, 0, 0, int(us%1e6)*1e3, time.UTC).Add(time.Duration(us/1e6) * time.Second)
	if !date1904 && x >= 1 && x < 60 {
		t = t.AddDate(0, 0, 1)
	}
	return t
}

// fliegelVanFlandern is the Gregorian calendar date of Julian day jd.
func fliegelVanFlandern(jd int) (year, month, day int) {
	l := jd + 68569
	n := 4 * l / 146097
	l -= (146097*n + 3) / 4
	i := 4000 * (l + 1) / 1461001
	l = l - 1461*i/4 + 31
	j := 80 * l / 2447
	day = l - 2447*j/80
	l = j / 11
	month = j + 2 - 12*l
	year = 100*(n-49) + i + l
	return year, month, day
}
