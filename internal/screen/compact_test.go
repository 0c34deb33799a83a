package screen

import "testing"

func TestCompact(t *testing.T) {
	for n, want := range map[int64]string{
		0: "0", 1024: "1,024", 99_999: "99,999", 100_000: "100.0 k", 117_127: "117.1 k",
		999_949: "999.9 k", 999_950: "1.0 M", 27_796_153: "27.8 M", 103_090_277: "103.1 M",
		229_667_402: "229.7 M", 3_300_000_000: "3.3 G", -250_000: "-250.0 k",
	} {
		if got := Compact(n); got != want {
			t.Errorf("Compact(%d) = %q, want %q", n, got, want)
		}
	}
}
