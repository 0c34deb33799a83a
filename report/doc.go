// Package report holds what every morsel report shares: the inputs and
// records a report left out, and the spread of a per-document figure.
//
// The analyses live in the folders below, one package each (survey, fit,
// ration, quote, fragments); each computes a result struct and renders it.
// What they share has a package named for what it is: walk (the ordered
// worker pool), request (frame and targets), measure (text measures that
// need no vocabulary) and render (grids, JSON, the HTML page and its SVG).
package report
