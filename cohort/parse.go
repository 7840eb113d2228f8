package cohort

import (
	"bytes"
	"context"
	"math"
	"runtime"
	"strconv"
	"strings"
	"sync"
)

type parser struct {
	// ctx stops the parse when it is done (checked every 65,536 rows).
	ctx     context.Context
	name    string
	ncol    int
	plan    []int // request index by header position, -1 for none
	nreq    int
	delim   byte
	missing []string
	maxMiss int
	dec     byte
	keep    bool
	header  []string
	kinds   []Kind // by header position
	nanErr  []bool // by header position
	// mp, when the data is a mapped file, takes back the pages each
	// worker has read (nil otherwise).
	mp *mapped
}

// part is what one worker parsed from one stretch of the file. Its slices
// are windows on the frame's final columns, so nothing is copied when
// the parts are joined unless empty lines left a gap.
type part struct {
	num     [][]float64
	codes   [][]int32
	levels  []map[string]int32
	names   [][]string
	first   [][]int
	missing []int
	// Rows on consecutive lines need no line table: row i is on line
	// base+i. lines is made only once a row is not (after an empty line
	// or a quoted field holding a line end), and then holds every row's
	// line.
	lines   []int32
	base    int
	rows    int
	max     int // the most rows the part can hold
	records []int64
	off     int // first row slot of the part in the frame
	err     error
}

// run parses the data rows from byte offset pos (on file line line) into
// fr. A file without quote characters after the header is cut at line
// ends into one stretch per worker; a file with quotes is read by one
// worker, since a quoted field may hold a line end.
func (p *parser) run(fr *Frame, reqs []Request, data []byte, pos, line, workers int) error {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	for _, m := range p.missing {
		p.maxMiss = max(p.maxMiss, len(m))
	}
	body := data[pos:]
	if len(body) < 1<<20 || bytes.IndexByte(body, '"') >= 0 {
		workers = 1
	}
	cuts := []int{pos}
	for w := 1; w < workers; w++ {
		c := pos + len(body)*w/workers
		if c < cuts[len(cuts)-1] {
			continue
		}
		nl := bytes.IndexByte(data[c:], '\n')
		if nl < 0 {
			break
		}
		cuts = append(cuts, c+nl+1)
	}
	cuts = append(cuts, len(data))
	nparts := len(cuts) - 1
	// A stretch holds at most as many rows as it has line ends, plus one
	// for a last line without a line end.
	bounds := make([]int, nparts)
	starts := make([]int, nparts)
	total := 0
	for k := range bounds {
		chunk := data[cuts[k]:cuts[k+1]]
		nl := bytes.Count(chunk, []byte{'\n'})
		bounds[k] = nl
		if len(chunk) > 0 && chunk[len(chunk)-1] != '\n' {
			bounds[k]++
		}
		starts[k] = line
		line += nl
		total += bounds[k]
	}
	fr.Columns = make([]*Column, len(reqs))
	for k, r := range reqs {
		c := &Column{Name: r.Name, Kind: r.Kind, Index: -1}
		for i, h := range p.header {
			if h == r.Name && c.Index < 0 {
				c.Index = i
			}
		}
		if r.Kind == Numeric {
			c.Num = make([]float64, total)
		} else {
			c.Codes = make([]int32, total)
		}
		fr.Columns[k] = c
	}
	parts := make([]*part, nparts)
	var wg sync.WaitGroup
	off := 0
	for k := range parts {
		pt := p.newPart(fr, off, bounds[k])
		parts[k] = pt
		off += bounds[k]
		wg.Add(1)
		go func(k int) {
			defer wg.Done()
			sc := &scanner{data: data[:cuts[k+1]], pos: cuts[k], line: starts[k], delim: p.delim}
			p.parse(sc, pt)
		}(k)
	}
	wg.Wait()
	for _, pt := range parts {
		if pt.err != nil {
			return pt.err
		}
	}
	p.join(fr, reqs, parts)
	return nil
}

// newPart makes a part whose column windows start at row slot off and
// hold up to n rows.
func (p *parser) newPart(fr *Frame, off, n int) *part {
	pt := &part{
		num:     make([][]float64, p.nreq),
		codes:   make([][]int32, p.nreq),
		levels:  make([]map[string]int32, p.nreq),
		names:   make([][]string, p.nreq),
		first:   make([][]int, p.nreq),
		missing: make([]int, p.nreq),
		max:     n,
		off:     off,
	}
	for k, c := range fr.Columns {
		if p.plan[c.Index] != k {
			continue // the same column requested twice is read once
		}
		if c.Kind == Numeric {
			pt.num[k] = c.Num[off : off : off+n]
		} else {
			pt.codes[k] = c.Codes[off : off : off+n]
			pt.levels[k] = map[string]int32{}
		}
	}
	return pt
}

// op is the work for one requested column of every record.
type op struct {
	col    int // header position
	k      int // request index
	kind   Kind
	nanErr bool
}

// parse reads records until the scanner's data ends, writing each value
// straight into the part's column windows.
func (p *parser) parse(sc *scanner, pt *part) {
	var ops []op
	for i, k := range p.plan {
		if k >= 0 && (pt.num[k] != nil || pt.codes[k] != nil) {
			ops = append(ops, op{col: i, k: k, kind: p.kinds[i], nanErr: p.nanErr[i]})
		}
	}
	nums := make([][]float64, p.nreq)
	codes := make([][]int32, p.nreq)
	for k := range nums {
		nums[k] = pt.num[k][:cap(pt.num[k])]
		codes[k] = pt.codes[k][:cap(pt.codes[k])]
	}
	var lines []int32 // nil while the rows are on consecutive lines
	// Missing markers are checked before parsing only when one of them
	// reads as a number (such as -99); otherwise only a field that is
	// not a number can be a missing marker.
	missingFirst := false
	for _, m := range p.missing {
		if _, ok := parseFloat([]byte(m), p.dec); ok {
			missingFirst = true
		}
	}
	row := 0
	freed := sc.pos
	defer func() {
		p.mp.release(freed, sc.pos)
		pt.rows = row
		if lines != nil {
			pt.lines = lines[:row]
		}
		for k := range nums {
			if pt.num[k] != nil {
				pt.num[k] = nums[k][:row]
			}
			if pt.codes[k] != nil {
				pt.codes[k] = codes[k][:row]
			}
		}
	}()
	for {
		line, from, to, ok, err := sc.next()
		if err != nil {
			pt.err = syntaxError(p.name, err)
			return
		}
		if !ok {
			return
		}
		if row&0xffff == 0 {
			if p.ctx.Err() != nil {
				pt.err = p.ctx.Err()
				return
			}
			freed = p.mp.release(freed, sc.pos)
		}
		if len(sc.fields) != p.ncol {
			pt.err = &Error{File: p.name, Line: line,
				Msg: strconv.Itoa(len(sc.fields)) + " fields, but the header has " + strconv.Itoa(p.ncol), Kind: ErrFormat}
			return
		}
		if row == 0 {
			pt.base = line
		}
		if lines == nil && line != pt.base+row {
			lines = make([]int32, pt.max)
			for j := range row {
				lines[j] = int32(pt.base + j)
			}
		}
		if lines != nil {
			lines[row] = int32(line)
		}
		if p.keep {
			pt.records = append(pt.records, int64(from), int64(to))
		}
		for _, o := range ops {
			f := trimSpace(sc.fields[o.col])
			if o.kind == Numeric {
				v, ok := 0.0, false
				if !missingFirst || !p.isMissing(f) {
					v, ok = parseFloat(f, p.dec)
				}
				if !ok {
					if o.nanErr && len(f) == 3 && strings.EqualFold(string(f), "nan") {
						pt.err = &Error{File: p.name, Line: line, Column: p.header[o.col], Value: string(f), HasValue: true,
							Msg: "not a number (a computed value of NaN is an error here, not a missing value)", Kind: ErrNotNumber}
						return
					}
					if !p.isMissing(f) {
						pt.err = p.numberError(f, o.col, line)
						return
					}
					v = math.NaN()
					pt.missing[o.k]++
				}
				nums[o.k][row] = v
				continue
			}
			codes[o.k][row] = p.level(pt, o.k, f, line)
		}
		row++
	}
}

func (p *parser) numberError(f []byte, col, line int) error {
	return &Error{File: p.name, Line: line, Column: p.header[col], Value: string(f), HasValue: true, Msg: notNumber(f, p.dec), Kind: ErrNotNumber}
}

// notNumber is the message for a field f of a numeric column that does
// not read as a number with decimal mark dec, with a hint when f reads
// with a decimal comma, or when f is a common spelling of a missing
// value (NULL, N/A, None, missing, -, ? and the like, in any case).
func notNumber(f []byte, dec byte) string {
	const msg = "not a number"
	if dec == '.' && bytes.IndexByte(f, ',') >= 0 {
		if _, ok := parseFloat(f, ','); ok {
			return msg + " (written with a decimal comma? see --decimal-comma)"
		}
	}
	switch strings.ToLower(string(trimSpace(f))) {
	case "null", "none", "nil", "na", "n/a", "#n/a", "nan", "missing", "unknown", "-", "--", "?", ".":
		return msg + " (if it marks a missing value, list it with --na-values)"
	}
	return msg
}

// newLevel records a level not seen before in this part.
func (p *parser) newLevel(pt *part, k int, f []byte, line int) int32 {
	code := int32(len(pt.names[k]))
	s := string(f)
	pt.levels[k][s] = code
	pt.names[k] = append(pt.names[k], s)
	pt.first[k] = append(pt.first[k], line)
	return code
}

// level returns the part-local code of a categorical field, -1 when it
// is a missing marker.
func (p *parser) level(pt *part, k int, f []byte, line int) int32 {
	if len(f) <= p.maxMiss && p.isMissing(f) {
		pt.missing[k]++
		return -1
	}
	// Few levels are found faster by comparing them in turn than by
	// hashing.
	names := pt.names[k]
	if len(names) <= 16 {
		for j, nm := range names {
			if nm == string(f) {
				return int32(j)
			}
		}
		if len(names) < 16 {
			return p.newLevel(pt, k, f, line)
		}
	}
	if code, ok := pt.levels[k][string(f)]; ok {
		return code
	}
	return p.newLevel(pt, k, f, line)
}

func (p *parser) isMissing(f []byte) bool {
	if len(f) > p.maxMiss {
		return false
	}
	for _, m := range p.missing {
		if len(m) == len(f) && string(f) == m {
			return true
		}
	}
	return false
}

func trimSpace(f []byte) []byte {
	for len(f) > 0 && (f[0] == ' ' || f[0] == '\t') {
		f = f[1:]
	}
	for len(f) > 0 && (f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
		f = f[:len(f)-1]
	}
	return f
}

// join closes the gaps that empty lines left between the parts, merges the
// parts' level tables in file order and fills in the frame's columns.
func (p *parser) join(fr *Frame, reqs []Request, parts []*part) {
	rows := 0
	for _, pt := range parts {
		n := pt.rows
		if pt.off != rows {
			for k, c := range fr.Columns {
				if c.Kind == Numeric && pt.num[k] != nil {
					copy(c.Num[rows:], pt.num[k])
				} else if pt.codes[k] != nil {
					copy(c.Codes[rows:], pt.codes[k])
				}
			}
		}
		pt.off = rows
		rows += n
		fr.records = append(fr.records, pt.records...)
	}
	fr.Rows = rows
	fr.lines, fr.line0 = joinLines(parts, rows)
	for k, c := range fr.Columns {
		k0 := p.plan[c.Index]
		if k0 != k {
			src := fr.Columns[k0]
			*c = *src
			c.Name = reqs[k].Name
			continue
		}
		if c.Kind == Numeric {
			c.Num = c.Num[:rows]
			for _, pt := range parts {
				c.Missing += pt.missing[k]
			}
			continue
		}
		c.Codes = c.Codes[:rows]
		index := map[string]int32{}
		for _, pt := range parts {
			remap := make([]int32, len(pt.names[k]))
			same := true
			for j, s := range pt.names[k] {
				code, ok := index[s]
				if !ok {
					code = int32(len(c.Levels))
					index[s] = code
					c.Levels = append(c.Levels, s)
					c.LevelLine = append(c.LevelLine, pt.first[k][j])
				}
				remap[j] = code
				same = same && code == int32(j)
			}
			if !same {
				w := c.Codes[pt.off : pt.off+pt.rows]
				for i, v := range w {
					if v >= 0 {
						w[i] = remap[v]
					}
				}
			}
			c.Missing += pt.missing[k]
		}
	}
}

// joinLines returns the line table of the joined parts, or nil and the
// line of row 0 when all rows are on consecutive lines, which is the
// common case: then no table of 4 bytes a row is written.
func joinLines(parts []*part, rows int) ([]int32, int) {
	dense, base, done := true, 0, 0
	for _, pt := range parts {
		if pt.rows == 0 {
			continue
		}
		if done == 0 {
			base = pt.base
		}
		if pt.lines != nil || pt.base != base+done {
			dense = false
			break
		}
		done += pt.rows
	}
	if dense {
		return nil, base
	}
	lines := make([]int32, 0, rows)
	for _, pt := range parts {
		if pt.lines != nil {
			lines = append(lines, pt.lines...)
			continue
		}
		for j := range pt.rows {
			lines = append(lines, int32(pt.base+j))
		}
	}
	return lines, 0
}
