//go:build !amd64 || noasm

package stats

func haveAVXFMA() bool { return false }

func gemvRowsAsm(a *float64, m, k int, x, y *float64) {
	panic("stats: assembly kernel called on a build without it")
}

func gemvRowsTAddAsm(a *float64, m, k int, c, dst *float64) {
	panic("stats: assembly kernel called on a build without it")
}

func blockTermsAsm(mu, n *float64, m int, sub float64) (sumNLog, sumMu float64, bad int) {
	panic("stats: assembly kernel called on a build without it")
}
