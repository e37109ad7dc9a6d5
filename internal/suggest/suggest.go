// Package suggest finds the known name nearest a mistyped one, so an error can say "did
// you mean": rule IDs, report formats, shells.
package suggest

// Nearest is the name of names closest to word by edit distance, when it is at most a
// third of word's letters away (so "scan-overheads" finds scan-overhead, but "x" finds
// nothing); ties keep the first of names.
func Nearest(word string, names []string) (string, bool) {
	best, dist := "", len(word)/3+1
	for _, n := range names {
		if d := Distance(word, n); d < dist {
			best, dist = n, d
		}
	}
	return best, best != ""
}

// Distance is the Levenshtein distance between a and b in bytes (the names are ASCII),
// with one row of the table kept.
func Distance(a, b string) int {
	row := make([]int, len(b)+1)
	for j := range row {
		row[j] = j
	}
	for i := 1; i <= len(a); i++ {
		prev := row[0]
		row[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			prev, row[j] = row[j], min(row[j]+1, row[j-1]+1, prev+cost)
		}
	}
	return row[len(b)]
}
