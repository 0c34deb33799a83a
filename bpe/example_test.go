package bpe_test

import (
	"fmt"

	"morsel/bpe"
)

// An encoder under the embedded GPT-2 vocabulary counts, encodes and
// decodes text. The ids are those of the tokens in GPT-2's own vocab.json
// (bpe/gpt2/, looked up there by hand); the split is the README's.
func ExampleEncoder() {
	enc, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	text := []byte("Bathyphorus quillandri")
	ids := enc.Encode(text)
	fmt.Println(enc.Count(text), "tokens")
	for _, id := range ids {
		piece, _ := enc.Vocab().Token(id)
		fmt.Printf("%d %q\n", id, piece)
	}
	fmt.Printf("%s\n", enc.Decode(ids))
	// Output:
	// 8 tokens
	// 33 "B"
	// 10036 "athy"
	// 746 "ph"
	// 15125 "orus"
	// 627 " qu"
	// 359 "ill"
	// 392 "and"
	// 380 "ri"
	// Bathyphorus quillandri
}
