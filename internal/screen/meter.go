package screen

import (
	"io"
	"time"
)

// A Meter keeps a progress line on a terminal up to date. Its methods are
// meant to be called from one goroutine at a time; it redraws at most
// every Every, and each time asks Columns for the terminal's width, so a
// resized window gets a line of its new width.
type Meter struct {
	W       io.Writer
	Columns func() int // the terminal's width; 0 or less means 80
	Every   time.Duration
	Now     func() time.Time // the clock; nil means time.Now

	st     Status
	start  time.Time
	last   time.Time
	drawn  bool
	closed bool
}

// clearLine returns the cursor to the line's start and erases the line.
const clearLine = "\r\x1b[2K"

func (m *Meter) now() time.Time {
	if m.Now != nil {
		return m.Now()
	}
	return time.Now()
}

// Plan sets the number of files and their bytes and draws the first line.
func (m *Meter) Plan(files int, bytes int64) {
	m.st.Files, m.st.Bytes = files, bytes
	m.start = m.now()
	m.draw(true)
}

// FileDone counts one more file read, of n bytes.
func (m *Meter) FileDone(n int64) {
	m.st.FilesDone++
	if n > 0 {
		m.st.BytesDone += n
	}
	m.draw(false)
}

// Tokens adds n tokens counted.
func (m *Meter) Tokens(n int) { m.st.Tokens += int64(n) }

// Finish erases the line, whatever the width it was drawn at.
func (m *Meter) Finish() {
	if m.drawn && !m.closed {
		io.WriteString(m.W, clearLine)
	}
	m.closed = true
}

func (m *Meter) draw(force bool) {
	if m.closed {
		return
	}
	t := m.now()
	if !force && t.Sub(m.last) < m.Every {
		return
	}
	m.last = t
	m.st.Elapsed = t.Sub(m.start)
	cols := 80
	if m.Columns != nil {
		if c := m.Columns(); c > 0 {
			cols = c
		}
	}
	io.WriteString(m.W, clearLine+ProgressLine(m.st, cols))
	m.drawn = true
}
