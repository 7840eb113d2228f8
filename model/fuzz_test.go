package model

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

// FuzzParseSpec: a spec never panics the parser; a spec refused is a
// *SpecError of a listed kind with a message of bounded length (echoed
// values are cut); a spec read is written by MarshalYAML as text that
// reads back to the same spec and is written again byte for byte.
//
// Seeds: the reference recipes and the spec seeds in testdata/fuzz at
// the repository's top.
func FuzzParseSpec(f *testing.F) {
	var names []string
	for _, pattern := range []string{"../testdata/reference/recipes/*.yaml", "../testdata/fuzz/spec-*.yaml"} {
		m, err := filepath.Glob(pattern)
		if err != nil {
			f.Fatal(err)
		}
		names = append(names, m...)
	}
	if len(names) < 7 {
		f.Fatalf("only %d seed specs", len(names))
	}
	for _, n := range names {
		b, err := os.ReadFile(n)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := ParseSpec("fuzz.yaml", data)
		if err != nil {
			var se *SpecError
			if !errors.As(err, &se) || se.Kind == nil {
				t.Fatalf("not a *SpecError of a listed kind: %T %v", err, err)
			}
			if len(err.Error()) > 2000 {
				t.Fatalf("a message of %d bytes: %.200s…", len(err.Error()), err)
			}
			return
		}
		text, err := s.MarshalYAML()
		if err != nil {
			t.Fatalf("MarshalYAML: %v", err)
		}
		back, err := ParseSpec("fuzz.yaml", text)
		if err != nil {
			t.Fatalf("the written spec does not read back: %v\n%s", err, text)
		}
		if !sameSpec(s, back) {
			t.Fatalf("the spec changed in the round trip:\n%+v\n%+v\n%s", s, back, text)
		}
		again, err := back.MarshalYAML()
		if err != nil || !bytes.Equal(again, text) {
			t.Fatalf("written twice differently (%v):\n%s\n%s", err, text, again)
		}
	})
}

// sameSpec compares two specs but for the lines they were read from.
// A NaN read as an outcome number equals NaN.
func sameSpec(a, b *Spec) bool {
	norm := func(s *Spec) Spec {
		c := *s
		c.Predictors = make([]Predictor, len(s.Predictors))
		for i, pr := range s.Predictors {
			pr.Line = 0
			pr.Levels = noLines(pr.Levels)
			pr.Coefs = noLines(pr.Coefs)
			c.Predictors[i] = pr
		}
		nan := func(v *Value) {
			if math.IsNaN(v.Num) {
				v.Num = 0
			}
		}
		nan(&c.Outcome.Event)
		if c.Outcome.NonEvent != nil {
			ne := *c.Outcome.NonEvent
			nan(&ne)
			c.Outcome.NonEvent = &ne
		}
		return c
	}
	return reflect.DeepEqual(norm(a), norm(b))
}

func noLines(cs []Coef) []Coef {
	if cs == nil {
		return nil
	}
	out := make([]Coef, len(cs))
	for i, c := range cs {
		c.Line = 0
		out[i] = c
	}
	return out
}
