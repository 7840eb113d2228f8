package pathtext

import "testing"

func TestPath(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"dev.csv", "dev.csv"},
		{"/data/2026/later_extract.parquet", "/data/2026/later_extract.parquet"},
		{"données/été.csv", "données/été.csv"},
		{"my extract.csv", `"my extract.csv"`},
		{"C:/x.csv", `"C:/x.csv"`},
		{"a\"b.csv", `"a\"b.csv"`},
		{"line\nbreak.csv", `"line\nbreak.csv"`},
		{"tab\t.csv", `"tab\t.csv"`},
		{"bad\xffutf8.csv", `"bad\xffutf8.csv"`},
		{"", `""`},
	} {
		if got := Path(tc.in); got != tc.want {
			t.Errorf("Path(%q) = %s, want %s", tc.in, got, tc.want)
		}
	}
}
