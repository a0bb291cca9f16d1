package disk

import "spinpop/internal/alias"

// aliasEntry is one column of Walker's alias table (see internal/alias).
type aliasEntry = alias.Entry

// buildAlias sets e from the non-negative weights w (at least one
// positive) so that pickAlias draws index i with probability w[i]/Σw.
func buildAlias(w []float64, e []aliasEntry) { alias.BuildPacked(w, e) }

// pickAlias draws an index from the alias table e with one 64-bit variate.
func pickAlias(x uint64, e []aliasEntry) int { return alias.Pick(x, e) }

// classEntry is a column of an alias table over height classes that also
// carries the density bound of the column's class and of its alias, so a
// draw reads one entry for both.
type classEntry struct {
	prob          float32
	alias         uint32
	env, envAlias float32
}

// classTable builds the alias table over classes of weights w, with the
// bounds env of each class.
func classTable(w []float64, env []bound) []classEntry {
	a := make([]aliasEntry, len(w))
	buildAlias(w, a)
	e := make([]classEntry, len(w))
	for i, x := range a {
		e[i] = classEntry{prob: x.Prob, alias: x.Alias, env: env[i].hi, envAlias: env[x.Alias].hi}
	}
	return e
}

// pickClass draws a class from e as pickAlias does, and returns its bound.
func pickClass(x uint64, e []classEntry) (int, float64) {
	hi, coin := alias.Split(x, len(e))
	c := &e[hi]
	if coin < c.prob {
		return hi, float64(c.env)
	}
	return int(c.alias), float64(c.envAlias)
}
