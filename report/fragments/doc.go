// Package fragments finds the words and glossary terms that a vocabulary
// breaks into many pieces, and ranks them by the tokens they waste.
package fragments
