package screen

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// A Status is how far a run has come, as the progress line shows it.
type Status struct {
	Files, FilesDone int
	Bytes, BytesDone int64 // Bytes is 0 when the size is not known (standard input)
	Tokens           int64
	Elapsed          time.Duration
}

// Bar widths, in columns between the brackets.
const (
	minBar = 10
	maxBar = 30
)

// ProgressLine lays st out in at most width-1 columns (so that the cursor
// never reaches the last column, where a terminal wraps), dropping parts
// as the width narrows: first the time left, then the rate, the bytes, the
// tokens, the bar, and last the percentage. The file count always stays,
// cut if it must be.
func ProgressLine(st Status, width int) string {
	room := width - 1
	if width <= 0 {
		room = 1 << 20
	}
	label := fmt.Sprintf("weighing %s/%s files", group(int64(st.FilesDone)), group(int64(st.Files)))
	frac := -1.0
	if st.Bytes > 0 {
		frac = float64(st.BytesDone) / float64(st.Bytes)
		if frac > 1 {
			frac = 1
		}
	}
	// The optional parts in the order they are shown, each with its rank:
	// the lower the rank, the longer it stays.
	type part struct {
		text string
		rank int
	}
	var parts []part
	bar := frac >= 0
	if bar {
		parts = append(parts, part{fmt.Sprintf("%d%%", int(frac*100)), 0})
	}
	parts = append(parts, part{group(st.Tokens) + " tokens", 2})
	if st.Bytes > 0 {
		parts = append(parts, part{Bytes(st.BytesDone) + " of " + Bytes(st.Bytes), 3})
	} else {
		parts = append(parts, part{Bytes(st.BytesDone), 3})
	}
	secs := st.Elapsed.Seconds()
	if secs >= 0.5 && st.BytesDone > 0 {
		rate := float64(st.BytesDone) / secs
		parts = append(parts, part{Bytes(int64(rate)) + "/s", 4})
		if frac > 0 && frac < 1 {
			left := time.Duration(secs * (1 - frac) / frac * float64(time.Second))
			parts = append(parts, part{Duration(left) + " left", 5})
		}
	}
	// Try levels from all parts down to the label alone: level L keeps
	// the parts ranked below L, and the bar (rank 1) from level 2 up.
	used := func(level int) int {
		n := Width(label)
		if bar && level > 1 {
			n += 2 + minBar + 2
		}
		for _, p := range parts {
			if p.rank < level {
				n += 2 + Width(p.text)
			}
		}
		return n
	}
	level := 6
	for level > 0 && used(level) > room {
		level--
	}
	bar = bar && level > 1
	var b strings.Builder
	b.WriteString(label)
	if bar {
		w := minBar + room - used(level)
		if w > maxBar {
			w = maxBar
		}
		fill := int(frac * float64(w))
		b.WriteString("  [")
		b.WriteString(strings.Repeat("=", fill))
		if fill < w {
			b.WriteString(">")
			b.WriteString(strings.Repeat(" ", w-fill-1))
		}
		b.WriteString("]")
	}
	for _, p := range parts {
		if p.rank < level {
			b.WriteString("  ")
			b.WriteString(p.text)
		}
	}
	return CutMiddle(b.String(), room)
}

// group writes n with thousands separators.
func group(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	if neg {
		b.WriteByte('-')
	}
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// Bytes formats a byte count in the largest unit that leaves at least one
// whole unit: 512 B, 3.4 kB, 117.1 MB (decimal units, as disks count).
func Bytes(n int64) string {
	const units = "kMGTPE"
	if n < 1000 {
		return strconv.FormatInt(n, 10) + " B"
	}
	x := float64(n)
	u := -1
	for x >= 1000 && u < len(units)-1 {
		x /= 1000
		u++
	}
	return strconv.FormatFloat(x, 'f', 1, 64) + " " + string(units[u]) + "B"
}

// Duration formats d for a person: 42s, 3m05s, 1h02m.
func Duration(d time.Duration) string {
	s := int64(d.Round(time.Second) / time.Second)
	switch {
	case s < 60:
		return fmt.Sprintf("%ds", s)
	case s < 3600:
		return fmt.Sprintf("%dm%02ds", s/60, s%60)
	default:
		return fmt.Sprintf("%dh%02dm", s/3600, s%3600/60)
	}
}
