// Package ration plans chunks so that the framed request of every chunk
// stays within a token budget.
package ration
