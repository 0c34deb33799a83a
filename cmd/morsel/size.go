package main

import (
	"fmt"
	"strconv"
	"strings"
)

// sizeFlag is a flag holding a number of bytes, given plain or with a
// binary suffix: 1048576, 1024KiB, 1MiB.
type sizeFlag int64

var sizeUnits = []struct {
	suffix string
	bytes  int64
}{{"GiB", 1 << 30}, {"MiB", 1 << 20}, {"KiB", 1 << 10}, {"B", 1}}

func (s *sizeFlag) Set(v string) error {
	num, unit := strings.TrimSpace(v), int64(1)
	for _, u := range sizeUnits {
		if n, ok := strings.CutSuffix(num, u.suffix); ok {
			num, unit = strings.TrimSpace(n), u.bytes
			break
		}
	}
	n, err := strconv.ParseInt(num, 10, 64)
	if err != nil || n <= 0 || n > (1<<62)/unit {
		return fmt.Errorf("%q: want a positive size in bytes, or with KiB, MiB or GiB", v)
	}
	*s = sizeFlag(n * unit)
	return nil
}

func (s *sizeFlag) String() string {
	for _, u := range sizeUnits {
		if int64(*s) >= u.bytes && int64(*s)%u.bytes == 0 {
			return strconv.FormatInt(int64(*s)/u.bytes, 10) + u.suffix
		}
	}
	return strconv.FormatInt(int64(*s), 10)
}

func (s *sizeFlag) Type() string { return "size" }
