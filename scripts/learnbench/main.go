// Command learnbench learns byte-level BPE merges from one text file and
// says how long each stage took: the driver of scripts/bench-learn.sh.
//
//	go run ./scripts/learnbench -merges 8000 FILE
package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"
	"time"

	"morsel/bpe"
)

func main() {
	merges := flag.Int("merges", 8000, "merges to learn")
	extend := flag.Bool("extend", false, "learn on top of the embedded GPT-2 vocabulary instead of from bytes")
	workers := flag.Int("workers", runtime.GOMAXPROCS(0), "workers counting words")
	flag.Parse()
	if flag.NArg() != 1 {
		fmt.Fprintln(os.Stderr, "usage: learnbench [-merges N] [-extend] FILE")
		os.Exit(2)
	}
	base := bpe.ByteVocab()
	if *extend {
		base = bpe.Default()
	}
	e, err := bpe.NewEncoder(base, bpe.Options{})
	if err != nil {
		fail(err)
	}
	f, err := os.Open(flag.Arg(0))
	if err != nil {
		fail(err)
	}
	defer f.Close()
	t0 := time.Now()
	chunks := make(chan []byte, *workers)
	counts := make([]*bpe.WordCount, *workers)
	var wg sync.WaitGroup
	for w := range counts {
		counts[w] = bpe.NewWordCount(e)
		wg.Add(1)
		go func(c *bpe.WordCount) {
			defer wg.Done()
			for ch := range chunks {
				c.Add(ch)
			}
		}(counts[w])
	}
	r := bufio.NewReaderSize(f, 1<<20)
	var carry []byte
	for {
		buf := make([]byte, 1<<20)
		n, err := io.ReadFull(r, buf)
		buf = append(carry, buf[:n]...)
		carry = nil
		if err == nil {
			// Cut before the last newline that follows an ASCII byte
			// other than white space: the GPT-2 split ends a pre-token
			// there, so the counts are those of the whole file.
			if i := cut(buf); i > 0 {
				carry = append([]byte(nil), buf[i:]...)
				buf = buf[:i]
			}
			chunks <- buf
			continue
		}
		if len(buf) > 0 {
			chunks <- buf
		}
		if err != io.EOF && err != io.ErrUnexpectedEOF {
			fail(err)
		}
		break
	}
	close(chunks)
	wg.Wait()
	total := counts[0]
	for _, c := range counts[1:] {
		total.Merge(c)
	}
	t1 := time.Now()
	got, err := bpe.Learn(total, bpe.LearnOptions{Merges: *merges})
	if err != nil {
		fail(err)
	}
	t2 := time.Now()
	fmt.Printf("words %d distinct %d; counting %.2fs, learning %d merges %.2fs, total %.2fs\n",
		total.Total(), total.Len(), t1.Sub(t0).Seconds(), len(got.New), t2.Sub(t1).Seconds(), t2.Sub(t0).Seconds())
}

func cut(b []byte) int {
	for i := len(b) - 1; i > 0; i-- {
		if c := b[i-1]; b[i] == '\n' && c < 0x80 && c != ' ' && c != '\t' && c != '\n' && c != '\r' && c != '\v' && c != '\f' {
			return i
		}
	}
	return 0
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "learnbench:", err)
	os.Exit(1)
}
