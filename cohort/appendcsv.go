package cohort

import (
	"bytes"
	"math"
	"strconv"
)

// AppendCSV returns the delimited text file the frame was read from,
// with columns added after its own: every record exactly as it was read
// (the frame must have been read with Options.KeepRecords), in file
// order, followed by names[k] holding values[k] for each row, written in
// the shortest form that reads back exactly (with a decimal comma when
// asked) and empty where a value is NaN.
func (f *Frame) AppendCSV(names []string, values [][]float64, decimalComma bool) []byte {
	var b bytes.Buffer
	b.Grow(len(f.HeaderRecord()) * (f.Rows + 1) * 2)
	d := f.Delimiter
	b.Write(f.HeaderRecord())
	for _, n := range names {
		b.WriteByte(d)
		b.WriteString(n)
	}
	b.WriteByte('\n')
	buf := make([]byte, 0, 64)
	for i := 0; i < f.Rows; i++ {
		b.Write(f.Record(i))
		for _, v := range values {
			b.WriteByte(d)
			if !math.IsNaN(v[i]) {
				b.Write(appendNumber(buf[:0], v[i], decimalComma))
			}
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// appendNumber formats v in the shortest form that reads back exactly,
// with a decimal comma when asked.
func appendNumber(buf []byte, v float64, decimalComma bool) []byte {
	buf = strconv.AppendFloat(buf, v, 'g', -1, 64)
	if decimalComma {
		for i, c := range buf {
			if c == '.' {
				buf[i] = ','
			}
		}
	}
	return buf
}
