// Package jsonout writes Go values as indented JSON the way encoding/json
// does (field order, json tags, omitempty, embedded structs), except that
// NaN and infinite numbers, which JSON cannot hold, are written as null.
package jsonout

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"
)

// Marshal returns v as JSON indented by two spaces, ending in a newline.
func Marshal(v any) ([]byte, error) {
	var b bytes.Buffer
	if err := write(&b, reflect.ValueOf(v), 0); err != nil {
		return nil, err
	}
	b.WriteByte('\n')
	return b.Bytes(), nil
}

var marshaler = reflect.TypeFor[json.Marshaler]()

func write(b *bytes.Buffer, v reflect.Value, depth int) error {
	if !v.IsValid() {
		b.WriteString("null")
		return nil
	}
	if v.Type().Implements(marshaler) && (v.Kind() != reflect.Pointer || !v.IsNil()) {
		out, err := v.Interface().(json.Marshaler).MarshalJSON()
		if err != nil {
			return err
		}
		var ind bytes.Buffer
		if err := json.Indent(&ind, out, strings.Repeat("  ", depth), "  "); err != nil {
			return err
		}
		b.Write(ind.Bytes())
		return nil
	}
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			b.WriteString("null")
			return nil
		}
		return write(b, v.Elem(), depth)
	case reflect.Float32, reflect.Float64:
		f := v.Float()
		if math.IsNaN(f) || math.IsInf(f, 0) {
			b.WriteString("null")
			return nil
		}
		b.WriteString(strconv.FormatFloat(f, 'g', -1, 64))
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		b.WriteString(strconv.FormatInt(v.Int(), 10))
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		b.WriteString(strconv.FormatUint(v.Uint(), 10))
	case reflect.Bool:
		b.WriteString(strconv.FormatBool(v.Bool()))
	case reflect.String:
		s, _ := json.Marshal(v.String())
		b.Write(s)
	case reflect.Slice:
		if v.IsNil() {
			b.WriteString("null")
			return nil
		}
		fallthrough
	case reflect.Array:
		if v.Len() == 0 {
			b.WriteString("[]")
			return nil
		}
		// Arrays of numbers go on one line.
		inline := isScalar(v.Type().Elem().Kind())
		b.WriteByte('[')
		for i := 0; i < v.Len(); i++ {
			if i > 0 {
				b.WriteByte(',')
				if inline {
					b.WriteByte(' ')
				}
			}
			if !inline {
				newline(b, depth+1)
			}
			if err := write(b, v.Index(i), depth+1); err != nil {
				return err
			}
		}
		if !inline {
			newline(b, depth)
		}
		b.WriteByte(']')
	case reflect.Map:
		if v.IsNil() {
			b.WriteString("null")
			return nil
		}
		keys := v.MapKeys()
		sort.Slice(keys, func(i, j int) bool { return fmt.Sprint(keys[i]) < fmt.Sprint(keys[j]) })
		b.WriteByte('{')
		for i, k := range keys {
			if i > 0 {
				b.WriteByte(',')
			}
			newline(b, depth+1)
			ks, _ := json.Marshal(fmt.Sprint(k))
			b.Write(ks)
			b.WriteString(": ")
			if err := write(b, v.MapIndex(k), depth+1); err != nil {
				return err
			}
		}
		if len(keys) > 0 {
			newline(b, depth)
		}
		b.WriteByte('}')
	case reflect.Struct:
		b.WriteByte('{')
		n := 0
		if err := writeFields(b, v, depth, &n); err != nil {
			return err
		}
		if n > 0 {
			newline(b, depth)
		}
		b.WriteByte('}')
	default:
		return fmt.Errorf("jsonout: cannot write %s", v.Type())
	}
	return nil
}

// writeFields writes the fields of a struct, flattening embedded structs
// without a json name as encoding/json does.
func writeFields(b *bytes.Buffer, v reflect.Value, depth int, n *int) error {
	t := v.Type()
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() && !(f.Anonymous && f.Type.Kind() == reflect.Struct) {
			continue
		}
		tag := f.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		fv := v.Field(i)
		if f.Anonymous && name == "" {
			ev := fv
			if ev.Kind() == reflect.Pointer {
				if ev.IsNil() {
					continue
				}
				ev = ev.Elem()
			}
			if ev.Kind() == reflect.Struct {
				if err := writeFields(b, ev, depth, n); err != nil {
					return err
				}
				continue
			}
		}
		if name == "" {
			name = f.Name
		}
		if strings.Contains(opts, "omitempty") && isEmpty(fv) {
			continue
		}
		if *n > 0 {
			b.WriteByte(',')
		}
		*n++
		newline(b, depth+1)
		ks, _ := json.Marshal(name)
		b.Write(ks)
		b.WriteString(": ")
		if err := write(b, fv, depth+1); err != nil {
			return err
		}
	}
	return nil
}

func isScalar(k reflect.Kind) bool {
	switch k {
	case reflect.Float32, reflect.Float64, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Bool:
		return true
	}
	return false
}

func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Slice, reflect.Map, reflect.String, reflect.Array:
		return v.Len() == 0
	case reflect.Pointer, reflect.Interface:
		return v.IsNil()
	case reflect.Bool:
		return !v.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return v.Int() == 0
	case reflect.Float32, reflect.Float64:
		return v.Float() == 0
	}
	return false
}

func newline(b *bytes.Buffer, depth int) {
	b.WriteByte('\n')
	for i := 0; i < depth; i++ {
		b.WriteString("  ")
	}
}
