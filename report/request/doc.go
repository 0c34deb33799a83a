// Package request describes the request a batch job sends for each
// document: the prompt frame around it, and the targets (vocabulary,
// window, answer size, prices) that a targets file names.
package request
