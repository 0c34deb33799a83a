package render

import "io"

// View says how the text views are laid out for the one who reads them.
// The zero View is for a pipe: tables as wide as their cells, sources
// whole, failures and skips listed as the defaults say.
type View struct {
	// Width is the table view's width in columns (a terminal's); 0 lays
	// tables out as wide as their cells.
	Width int
	// Base is the folder that sources are shown relative to in the table,
	// Markdown and HTML views; "" shows them whole.
	Base string
	// Verbose lists every input that was not counted, not only failures.
	Verbose bool
}

// viewWriter is a writer that carries its View to the renderers.
type viewWriter struct {
	io.Writer
	v View
}

// WithView returns w carrying v, for the renderers that write to it.
func WithView(w io.Writer, v View) io.Writer { return viewWriter{w, v} }

// ViewOf returns the View that w carries, or the zero View.
func ViewOf(w io.Writer) View {
	if vw, ok := w.(viewWriter); ok {
		return vw.v
	}
	return View{}
}
