package shot

import "strings"

// Nearest is the candidate closest to a mistyped name (a flag, a setup key, a channel's
// name), or "" when none is within two edits; case is ignored.
func Nearest(name string, candidates []string) string {
	best, bestD := "", 3
	for _, c := range candidates {
		if d := distance(strings.ToLower(name), strings.ToLower(c)); d < bestD && d < len(c) {
			best, bestD = c, d
		}
	}
	return best
}

// distance is the Levenshtein edit distance.
func distance(a, b string) int {
	prev := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur := []int{i}
		for j := 1; j <= len(b); j++ {
			d := prev[j-1]
			if a[i-1] != b[j-1] {
				d = 1 + min(prev[j-1], prev[j], cur[j-1])
			}
			cur = append(cur, d)
		}
		prev = cur
	}
	return prev[len(b)]
}
