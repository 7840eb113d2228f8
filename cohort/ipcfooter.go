package cohort

import (
	"encoding/base64"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/apache/arrow-go/v18/parquet/metadata"
)

// checkArrowFooter checks the footer of an Arrow IPC file before the
// Arrow library reads it: every table, string and vector the footer
// points to lies inside the footer, with no more elements than its bytes
// can hold. The library sizes its slices by the vectors' stated lengths,
// so a damaged length would otherwise ask for hundreds of gigabytes at
// once, which ends the process with an out-of-memory fault.
//
// The footer is a flatbuffer (the Arrow columnar format's File.fbs):
// Footer {version, schema: Schema, dictionaries: [Block],
// recordBatches: [Block], custom_metadata: [KeyValue]}, Schema
// {endianness, fields: [Field], custom_metadata, features: [long]} and
// Field {name, nullable, type_type, type, dictionary, children: [Field],
// custom_metadata}.
func checkArrowFooter(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return err
	}
	const magic, tail = "ARROW1", 10 // footer length (int32) and magic at the end
	size := st.Size()
	if size < int64(len(magic))+tail {
		return errors.New("the file is too short for an Arrow IPC file")
	}
	end := make([]byte, tail)
	if _, err := f.ReadAt(end, size-tail); err != nil {
		return err
	}
	if string(end[4:]) != magic {
		return errors.New("the file does not end with the Arrow IPC magic")
	}
	n := int64(int32(binary.LittleEndian.Uint32(end[:4])))
	if n <= 0 || n > size-tail-int64(len(magic)) {
		return fmt.Errorf("the footer says %d bytes in a file of %d", n, size)
	}
	buf := make([]byte, n)
	if _, err := f.ReadAt(buf, size-tail-n); err != nil && !errors.Is(err, io.EOF) {
		return err
	}
	fb := flatbuf{b: buf, budget: 1 << 20}
	footer, err := fb.root()
	if err != nil {
		return err
	}
	if err := fb.vector(footer, 2, 24); err != nil { // dictionaries: Block structs
		return err
	}
	if err := fb.vector(footer, 3, 24); err != nil { // record batches
		return err
	}
	if err := fb.tables(footer, 4, fb.keyValue); err != nil {
		return err
	}
	schema, ok, err := fb.table(footer, 1)
	if err != nil || !ok {
		return err
	}
	return fb.schema(schema)
}

// checkStoredSchema checks the Arrow schema a Parquet file may carry in
// its metadata (key "ARROW:schema", an IPC schema message in base64),
// which the Parquet reader decodes with the same Arrow library code as
// an IPC footer. A value that is not base64 is left to the reader.
func checkStoredSchema(meta metadata.KeyValueMetadata) error {
	v := meta.FindValue("ARROW:schema")
	if v == nil {
		return nil
	}
	msg, err := base64.StdEncoding.DecodeString(*v)
	if err != nil {
		if msg, err = base64.RawStdEncoding.DecodeString(*v); err != nil {
			return nil
		}
	}
	// An IPC message: an optional continuation marker (0xFFFFFFFF), the
	// length of the flatbuffer, the flatbuffer Message {version,
	// header_type, header, bodyLength, custom_metadata}.
	if len(msg) >= 4 && binary.LittleEndian.Uint32(msg) == 0xFFFFFFFF {
		msg = msg[4:]
	}
	if len(msg) < 4 {
		return errors.New("the Arrow schema stored in the file is damaged")
	}
	n := int64(int32(binary.LittleEndian.Uint32(msg)))
	if n <= 0 || n > int64(len(msg))-4 {
		return fmt.Errorf("the Arrow schema stored in the file says %d bytes in %d", n, len(msg)-4)
	}
	fb := flatbuf{b: msg[4 : 4+n], budget: 1 << 20}
	m, err := fb.root()
	if err != nil {
		return fmt.Errorf("the Arrow schema stored in the file: %w", err)
	}
	if err := fb.tables(m, 4, fb.keyValue); err != nil {
		return fmt.Errorf("the Arrow schema stored in the file: %w", err)
	}
	schema, ok, err := fb.table(m, 2)
	if err == nil && ok {
		err = fb.schema(schema)
	}
	if err != nil {
		return fmt.Errorf("the Arrow schema stored in the file: %w", err)
	}
	return nil
}

// schema checks a Schema table: its fields (and theirs, nested), its
// custom metadata and its features.
func (fb *flatbuf) schema(t int64) error {
	if err := fb.vector(t, 3, 8); err != nil { // features: longs
		return err
	}
	if err := fb.tables(t, 2, fb.keyValue); err != nil {
		return err
	}
	return fb.tables(t, 1, fb.field(0))
}

// flatbuf reads just enough of a flatbuffer to check its extents.
type flatbuf struct {
	b []byte
	// budget bounds the tables visited, so a cycle or a deep nesting of
	// a damaged buffer ends.
	budget int
}

func (fb *flatbuf) u32(at int64) (int64, error) {
	if at < 0 || at+4 > int64(len(fb.b)) {
		return 0, fmt.Errorf("an offset %d outside the footer of %d bytes", at, len(fb.b))
	}
	return int64(binary.LittleEndian.Uint32(fb.b[at:])), nil
}

func (fb *flatbuf) root() (int64, error) {
	at, err := fb.u32(0)
	if err != nil {
		return 0, err
	}
	return at, fb.checkTable(at)
}

// checkTable checks a table's vtable.
func (fb *flatbuf) checkTable(t int64) error {
	if fb.budget--; fb.budget < 0 {
		return errors.New("the footer nests too deeply")
	}
	so, err := fb.u32(t)
	if err != nil {
		return err
	}
	vt := t - int64(int32(so))
	if vt < 0 || vt+4 > int64(len(fb.b)) {
		return fmt.Errorf("a table's layout at %d outside the footer", vt)
	}
	vsize := int64(binary.LittleEndian.Uint16(fb.b[vt:]))
	if vsize < 4 || vt+vsize > int64(len(fb.b)) {
		return fmt.Errorf("a table's layout of %d bytes outside the footer", vsize)
	}
	return nil
}

// slot returns where field i of table t lies, or 0 when it is absent,
// reading the layout exactly as the flatbuffers library does (a field
// is present when its layout entry starts before the layout's stated
// size, even a damaged odd size).
func (fb *flatbuf) slot(t int64, i int) int64 {
	so, _ := fb.u32(t)
	vt := t - int64(int32(so))
	vsize := int64(binary.LittleEndian.Uint16(fb.b[vt:]))
	at := int64(4 + 2*i)
	if at >= vsize || vt+at+2 > int64(len(fb.b)) {
		return 0
	}
	o := int64(binary.LittleEndian.Uint16(fb.b[vt+at:]))
	if o == 0 {
		return 0
	}
	return t + o
}

// target follows the offset in field i of table t.
func (fb *flatbuf) target(t int64, i int) (int64, bool, error) {
	s := fb.slot(t, i)
	if s == 0 {
		return 0, false, nil
	}
	u, err := fb.u32(s)
	if err != nil {
		return 0, false, err
	}
	return s + u, true, nil
}

// table follows field i of t to a table and checks it.
func (fb *flatbuf) table(t int64, i int) (int64, bool, error) {
	at, ok, err := fb.target(t, i)
	if err != nil || !ok {
		return 0, ok, err
	}
	return at, true, fb.checkTable(at)
}

// vectorAt checks the vector at v of elements of size bytes each and
// returns its length.
func (fb *flatbuf) vectorAt(v, size int64) (int64, error) {
	n, err := fb.u32(v)
	if err != nil {
		return 0, err
	}
	if n*size > int64(len(fb.b))-v-4 {
		return 0, fmt.Errorf("a list of %d entries in %d bytes of footer", n, int64(len(fb.b))-v-4)
	}
	return n, nil
}

// vector checks the vector in field i of t.
func (fb *flatbuf) vector(t int64, i int, size int64) error {
	v, ok, err := fb.target(t, i)
	if err != nil || !ok {
		return err
	}
	_, err = fb.vectorAt(v, size)
	return err
}

// tables checks the vector of tables in field i of t, and each table by
// check.
func (fb *flatbuf) tables(t int64, i int, check func(int64) error) error {
	v, ok, err := fb.target(t, i)
	if err != nil || !ok {
		return err
	}
	n, err := fb.vectorAt(v, 4)
	if err != nil {
		return err
	}
	for k := int64(0); k < n; k++ {
		e := v + 4 + 4*k
		u, err := fb.u32(e)
		if err != nil {
			return err
		}
		if err := fb.checkTable(e + u); err != nil {
			return err
		}
		if err := check(e + u); err != nil {
			return err
		}
	}
	return nil
}

// keyValue checks a KeyValue table's two strings.
func (fb *flatbuf) keyValue(t int64) error {
	for i := 0; i < 2; i++ {
		if err := fb.vector(t, i, 1); err != nil {
			return err
		}
	}
	return nil
}

// field checks a Field table: its name, custom metadata and children,
// to a depth of 64.
func (fb *flatbuf) field(depth int) func(int64) error {
	return func(t int64) error {
		if depth > 64 {
			return errors.New("fields nested more than 64 deep")
		}
		if err := fb.vector(t, 0, 1); err != nil {
			return err
		}
		if err := fb.tables(t, 6, fb.keyValue); err != nil {
			return err
		}
		return fb.tables(t, 5, fb.field(depth+1))
	}
}
