package jsonout

import (
	"encoding/json"
	"math"
	"testing"
)

type inner struct {
	A float64 `json:"a"`
	B []int   `json:"b,omitempty"`
}

type outer struct {
	inner
	Name  string             `json:"name"`
	CI    [2]float64         `json:"ci"`
	Ptr   *inner             `json:"ptr,omitempty"`
	List  []inner            `json:"list"`
	Map   map[string]float64 `json:"map"`
	Skip  int                `json:"-"`
	plain int
}

// TestMatchesEncodingJSON: for values without NaN the output decodes to
// the same as encoding/json's, and NaN becomes null.
func TestMatchesEncodingJSON(t *testing.T) {
	v := outer{inner: inner{A: 1.5, B: []int{1, 2}}, Name: "x<y>", CI: [2]float64{0.1, 1e-7},
		List: []inner{{A: 2}}, Map: map[string]float64{"z": 1, "a": 2}}
	got, err := Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := json.Marshal(v)
	var g, w any
	if err := json.Unmarshal(got, &g); err != nil {
		t.Fatalf("%v\n%s", err, got)
	}
	_ = json.Unmarshal(want, &w)
	gb, _ := json.Marshal(g)
	wb, _ := json.Marshal(w)
	if string(gb) != string(wb) {
		t.Errorf("got  %s\nwant %s", gb, wb)
	}
	v.A, v.CI[1] = math.NaN(), math.Inf(1)
	got, err = Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(got, &m); err != nil {
		t.Fatal(err)
	}
	if m["a"] != nil || m["ci"].([]any)[1] != nil {
		t.Errorf("NaN and Inf should be null: %s", got)
	}
}
