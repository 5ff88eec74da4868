// Package plural writes counts with the noun in the right number, so that
// no message says "1 points" or "1 job(s)".
package plural

import "strconv"

// Count returns n followed by one when n is 1 and by many otherwise:
// Count(1, "point", "points") is "1 point", Count(0, …) "0 points".
func Count(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

// Noun returns one when n is 1 and many otherwise.
func Noun(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
