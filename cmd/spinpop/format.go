package main

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Plain-text forms of lists and tallies for stdout. Go's %v prints a slice
// as "[a b c]" and a map as "map[a:1 b:2]", which reads as a program's
// internals rather than as a sentence; these are what a person writes.

// wordList joins names with commas: "rejected.csv, residuals.png".
// An empty list reads "none".
func wordList(names []string) string {
	if len(names) == 0 {
		return "none"
	}
	return strings.Join(names, ", ")
}

// tally writes counts by reason, largest first (ties by name, so the line
// is the same on every run): "period ≤ 0: 12, missing value: 3". An empty
// tally reads "none".
func tally(counts map[string]int) string {
	keys := make([]string, 0, len(counts))
	for k := range counts {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b string) int {
		if counts[a] != counts[b] {
			return counts[b] - counts[a]
		}
		return strings.Compare(a, b)
	})
	parts := make([]string, 0, len(keys))
	for _, k := range keys {
		parts = append(parts, fmt.Sprintf("%s: %d", k, counts[k]))
	}
	return wordList(parts)
}

// fixedOrNA formats x with the given verb's width and precision ("%9.3f"),
// or "n/a" right-aligned in the same width when x is not a number: an
// empty bin has no fraction, and 0.000 would claim one.
func fixedOrNA(format string, x float64) string {
	s := fmt.Sprintf(format, x)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Sprintf("%*s", len(s), "n/a")
	}
	return s
}

// thousands writes a count with spaces between groups of three
// digits (89 869), as SI writes large numbers (a space, not a comma,
// which reads as a decimal mark in much of the world).
func thousands(n int64) string {
	s := fmt.Sprint(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(' ')
		}
		b.WriteRune(r)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// readable turns a model's name into a label for a figure: a file path or
// example reference ("scenarios/burst-stall.toml", "example:burst") becomes
// its bare name ("burst-stall", "burst"), and underscores become spaces.
// Labels name models as people do, never by where their file lies.
func readable(name string) string {
	n := strings.TrimPrefix(name, "example:")
	if i := strings.LastIndexAny(n, `/\`); i >= 0 {
		n = n[i+1:]
	}
	n = strings.TrimSuffix(n, ".toml")
	n = strings.ReplaceAll(n, "_", " ")
	if strings.TrimSpace(n) == "" {
		return name
	}
	return n
}

// keyLabel turns a scenario key into an axis label: a history parameter
// as paramLabel writes it ("history.burst.age_gyr" → "burst age (Gyr)"),
// any other key with its dots and underscores as spaces ("spin.law" →
// "spin law"). Figures name quantities, not configuration paths.
func keyLabel(key string) string {
	if rest, ok := strings.CutPrefix(key, "history."); ok {
		return paramLabel(rest)
	}
	return paramLabel(strings.ReplaceAll(key, ".", " "))
}
