// Package render writes reports: grids of text cells as tables, CSV and
// Markdown, values as JSON, and self-contained HTML pages with inline SVG
// charts.
package render
