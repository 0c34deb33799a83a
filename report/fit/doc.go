// Package fit checks which documents overflow the context window once
// they are framed and the answer is reserved.
package fit
