// Package tally counts the words of a fragments run: for every distinct
// word, its occurrences, the pieces they took, the documents it occurs in
// and the ways it was split into tokens.
//
// A worker adds each document's words to its own [Batch], a small table
// that stays in the processor's cache, and flushes the batch into the
// run's [Tables] between documents. Tables holds numParts partitions,
// each with its own lock, chosen by the word's hash, so that workers
// flushing at once seldom wait for each other and every word is tallied
// in one place.
//
// Invariants:
//
//   - A document is scanned within one batch: a batch is flushed only
//     between documents (the caller calls Flush when Full says so, never
//     in the middle of a document). A word's document count rests on it,
//     since a batch counts a document once per word by its number. The
//     one exception is a batch that holds one large document alone,
//     stamped (SetStamp) and flushed in parts: a word keeps the stamp of
//     the last such batch that counted it, and one such document at a
//     time flushes in parts.
//   - Batches flush between documents, and all of them before the tables
//     are read: the tables then hold every word, whichever worker scanned
//     it, and their counts do not depend on the order of the flushes.
//   - At most MaxSplits splits are kept per word: of all the distinct
//     splits it was counted with, those of the smallest keys (fewer ids
//     first, then the ids in lexicographic order; CompareSplits), each with
//     its exact count; the occurrences of a further split count in the
//     word's totals only. A split that arrives at a word keeping MaxSplits
//     takes the place of the largest key kept when its own key is smaller,
//     and the count of the split that gives way is dropped. So what is kept
//     does not depend on the order of the flushes: a split among the final
//     MaxSplits smallest has fewer than MaxSplits smaller keys among any
//     subset of the splits, so it is taken in when it first arrives and
//     never gives way, and every occurrence of it is counted, whatever the
//     order. A split that gave way never comes back, since the MaxSplits
//     kept then all have smaller keys. The same holds for tables merged
//     from shards (AddWord): each shard keeps such a split with its full
//     count, and the merge keeps it and adds them. Since a split of larger
//     key has at least as many ids, the one taken in fits in the place of
//     the one that gave way in the id arena: a word's splits take no more
//     of it than the first MaxSplits did.
//   - A word's tally and a batch's word are 64 bytes each, one cache line,
//     and hold no pointers (words and ids are offsets into arenas), so the
//     garbage collector never scans the millions of them a large corpus
//     makes.
//   - Counts are exact at any size: the tables count in 64 bits; a batch
//     counts a word in 64 bits and a split in 32, and a split count that
//     reaches 2^32-1 is carried to the batch's spill list and starts again
//     from zero (a document of many gigabytes may be one batch).
//   - Offsets are 32 bits, which bounds the bytes of distinct words and
//     the ids of uncommon splits that a batch, or a partition of the
//     tables, holds to 4 GiB. Full reports a batch past 2 GiB of either, so
//     only one document's own distinct words could pass the bound; these
//     are limits of the layout, not checked word by word.
//   - An entry of the one-token look-up made in one batch is never read in
//     a later one: entries carry the batch's tag, one of numTags, and the
//     look-up is cleared before a tag is used again.
package tally
