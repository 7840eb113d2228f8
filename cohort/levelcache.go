package cohort

// levelCache remembers the codes of the last few distinct texts met in
// a categorical column, so that a column of a handful of levels (the
// usual case: sex, smoking status, a yes/no outcome) is coded by
// comparing a value with a few short strings rather than hashing it
// into the column's index on every row. It only memoises the index: a
// text's code is the one the index gave it the first time.
type levelCache struct {
	text [levelCacheSize]string
	code [levelCacheSize]int32
	n    int // entries used
	next int // the entry to replace when full
}

const levelCacheSize = 8

// get returns the code remembered for v.
func (lc *levelCache) get(v []byte) (int32, bool) {
	for k := 0; k < lc.n; k++ {
		if lc.text[k] == string(v) {
			return lc.code[k], true
		}
	}
	return 0, false
}

// put remembers code for v (a copy of it), replacing the oldest entry
// when the cache is full.
func (lc *levelCache) put(v []byte, code int32) {
	k := lc.n
	if k < levelCacheSize {
		lc.n++
	} else {
		k = lc.next
		lc.next = (lc.next + 1) % levelCacheSize
	}
	lc.text[k], lc.code[k] = string(v), code
}
