package disk

import (
	"math"
	"math/rand/v2"
	"runtime"
	"syscall"
	"testing"
	"time"
)

func cpuNow() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_THREAD, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

var sinkS float64

func TestScratchCPU(t *testing.T) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	sph := benchSampler(&testing.B{}, Sphere{RadiusPc: 1000})
	cone := benchSampler(&testing.B{}, Cone{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000})
	r := rand.New(rand.NewPCG(1, 2))
	const n = 3000000
	for rep := 0; rep < 3; rep++ {
		t0 := cpuNow()
		x := 0.1
		for i := 0; i < n; i++ {
			sinkS += math.Exp(x)
			x += 1e-9
		}
		t1 := cpuNow()
		for i := 0; i < n; i++ {
			l, _, _, _, _ := sph.Draw(i%40, r)
			sinkS += l
		}
		t2 := cpuNow()
		for i := 0; i < n; i++ {
			l, _, _, _, _ := sph.Draw(20, r)
			sinkS += l
		}
		t3 := cpuNow()
		for i := 0; i < n; i++ {
			l, _, _, _, _ := cone.Draw(i%40, r)
			sinkS += l
		}
		t4 := cpuNow()
		for i := 0; i < n; i++ {
			l, _, _, _, _ := cone.Draw(20, r)
			sinkS += l
		}
		t5 := cpuNow()
		t.Logf("cpu ns/op: exp %.1f sphere40 %.1f sphere1 %.1f cone40 %.1f cone1 %.1f", float64(t1-t0)/n, float64(t2-t1)/n, float64(t3-t2)/n, float64(t4-t3)/n, float64(t5-t4)/n)
	}
}
