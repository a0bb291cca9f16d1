//go:build !noasm

#include "textflag.h"

// AVX+FMA kernels for the template-mixture hot path; see kernel.go. Rows
// are k float64 apart; four rows are handled per pass with one YMM
// accumulator each, and the k mod 4 trailing columns with scalar FMAs.
// R14 and R15 are left alone (goroutine pointer and dynamic-linking
// scratch in the Go ABI).

// func gemvRowsAsm(a *float64, m, k int, x, y *float64)
TEXT ·gemvRowsAsm(SB), NOSPLIT, $0-40
	MOVQ a+0(FP), SI
	MOVQ m+8(FP), CX
	MOVQ k+16(FP), R8
	MOVQ x+24(FP), DI
	MOVQ y+32(FP), BX
	MOVQ R8, R9
	ANDQ $-4, R9
	SHLQ $3, R9 // bytes covered by whole vectors
	SHLQ $3, R8 // row stride in bytes

rows4:
	CMPQ CX, $4
	JL   rows1
	LEAQ (SI)(R8*1), R11
	LEAQ (R11)(R8*1), R12
	LEAQ (R12)(R8*1), R13
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	XORQ   AX, AX

vec4:
	CMPQ        AX, R9
	JGE         red4
	VMOVUPD     (DI)(AX*1), Y4
	VFMADD231PD (SI)(AX*1), Y4, Y0
	VFMADD231PD (R11)(AX*1), Y4, Y1
	VFMADD231PD (R12)(AX*1), Y4, Y2
	VFMADD231PD (R13)(AX*1), Y4, Y3
	ADDQ        $32, AX
	JMP         vec4

red4:
	// Y0..Y3 hold four partial sums per row; fold them into one vector
	// of the four row sums.
	VHADDPD    Y1, Y0, Y0
	VHADDPD    Y3, Y2, Y2
	VPERM2F128 $0x21, Y2, Y0, Y5
	VBLENDPD   $0x0C, Y2, Y0, Y6
	VADDPD     Y5, Y6, Y0
	VMOVUPD    Y0, (BX)

tail4:
	CMPQ        AX, R8
	JGE         next4
	VMOVSD      (DI)(AX*1), X4
	VMOVSD      (BX), X0
	VFMADD231SD (SI)(AX*1), X4, X0
	VMOVSD      X0, (BX)
	VMOVSD      8(BX), X0
	VFMADD231SD (R11)(AX*1), X4, X0
	VMOVSD      X0, 8(BX)
	VMOVSD      16(BX), X0
	VFMADD231SD (R12)(AX*1), X4, X0
	VMOVSD      X0, 16(BX)
	VMOVSD      24(BX), X0
	VFMADD231SD (R13)(AX*1), X4, X0
	VMOVSD      X0, 24(BX)
	ADDQ        $8, AX
	JMP         tail4

next4:
	LEAQ (R13)(R8*1), SI
	ADDQ $32, BX
	SUBQ $4, CX
	JMP  rows4

rows1:
	TESTQ  CX, CX
	JLE    done
	VXORPD Y0, Y0, Y0
	XORQ   AX, AX

vec1:
	CMPQ        AX, R9
	JGE         red1
	VMOVUPD     (DI)(AX*1), Y4
	VFMADD231PD (SI)(AX*1), Y4, Y0
	ADDQ        $32, AX
	JMP         vec1

red1:
	VEXTRACTF128 $1, Y0, X1
	VADDPD       X1, X0, X0
	VHADDPD      X0, X0, X0

tail1:
	CMPQ        AX, R8
	JGE         next1
	VMOVSD      (DI)(AX*1), X4
	VFMADD231SD (SI)(AX*1), X4, X0
	ADDQ        $8, AX
	JMP         tail1

next1:
	VMOVSD X0, (BX)
	ADDQ   R8, SI
	ADDQ   $8, BX
	DECQ   CX
	JMP    rows1

done:
	VZEROUPPER
	RET

// func gemvRowsTAddAsm(a *float64, m, k int, c, dst *float64)
TEXT ·gemvRowsTAddAsm(SB), NOSPLIT, $0-40
	MOVQ a+0(FP), SI
	MOVQ m+8(FP), CX
	MOVQ k+16(FP), R8
	MOVQ c+24(FP), DI
	MOVQ dst+32(FP), BX
	MOVQ R8, R9
	ANDQ $-4, R9
	SHLQ $3, R9
	SHLQ $3, R8

trows4:
	CMPQ         CX, $4
	JL           trows1
	LEAQ         (SI)(R8*1), R11
	LEAQ         (R11)(R8*1), R12
	LEAQ         (R12)(R8*1), R13
	VBROADCASTSD (DI), Y0
	VBROADCASTSD 8(DI), Y1
	VBROADCASTSD 16(DI), Y2
	VBROADCASTSD 24(DI), Y3
	XORQ         AX, AX

tvec4:
	CMPQ        AX, R9
	JGE         ttail4
	VMOVUPD     (BX)(AX*1), Y4
	VFMADD231PD (SI)(AX*1), Y0, Y4
	VFMADD231PD (R11)(AX*1), Y1, Y4
	VFMADD231PD (R12)(AX*1), Y2, Y4
	VFMADD231PD (R13)(AX*1), Y3, Y4
	VMOVUPD     Y4, (BX)(AX*1)
	ADDQ        $32, AX
	JMP         tvec4

ttail4:
	CMPQ        AX, R8
	JGE         tnext4
	VMOVSD      (BX)(AX*1), X4
	VFMADD231SD (SI)(AX*1), X0, X4
	VFMADD231SD (R11)(AX*1), X1, X4
	VFMADD231SD (R12)(AX*1), X2, X4
	VFMADD231SD (R13)(AX*1), X3, X4
	VMOVSD      X4, (BX)(AX*1)
	ADDQ        $8, AX
	JMP         ttail4

tnext4:
	LEAQ (R13)(R8*1), SI
	ADDQ $32, DI
	SUBQ $4, CX
	JMP  trows4

trows1:
	TESTQ        CX, CX
	JLE          tdone
	VBROADCASTSD (DI), Y0
	XORQ         AX, AX

tvec1:
	CMPQ        AX, R9
	JGE         ttail1
	VMOVUPD     (BX)(AX*1), Y4
	VFMADD231PD (SI)(AX*1), Y0, Y4
	VMOVUPD     Y4, (BX)(AX*1)
	ADDQ        $32, AX
	JMP         tvec1

ttail1:
	CMPQ        AX, R8
	JGE         tnext1
	VMOVSD      (BX)(AX*1), X4
	VFMADD231SD (SI)(AX*1), X0, X4
	VMOVSD      X4, (BX)(AX*1)
	ADDQ        $8, AX
	JMP         ttail1

tnext1:
	ADDQ R8, SI
	ADDQ $8, DI
	DECQ CX
	JMP  trows1

tdone:
	VZEROUPPER
	RET

// Constants for blockTermsAsm, each repeated in four lanes. The logarithm
// follows Go's math/log.go (FreeBSD e_log.c) step for step; L1…L7, Ln2Hi
// and Ln2Lo are that file's constants (its hex comments), vectorised.
DATA magic<>+0(SB)/8, $0x4330000000000000
DATA magic<>+8(SB)/8, $0x4330000000000000
DATA magic<>+16(SB)/8, $0x4330000000000000
DATA magic<>+24(SB)/8, $0x4330000000000000
GLOBL magic<>(SB), RODATA|NOPTR, $32

DATA mant<>+0(SB)/8, $0x000FFFFFFFFFFFFF
DATA mant<>+8(SB)/8, $0x000FFFFFFFFFFFFF
DATA mant<>+16(SB)/8, $0x000FFFFFFFFFFFFF
DATA mant<>+24(SB)/8, $0x000FFFFFFFFFFFFF
GLOBL mant<>(SB), RODATA|NOPTR, $32

DATA half<>+0(SB)/8, $0x3FE0000000000000
DATA half<>+8(SB)/8, $0x3FE0000000000000
DATA half<>+16(SB)/8, $0x3FE0000000000000
DATA half<>+24(SB)/8, $0x3FE0000000000000
GLOBL half<>(SB), RODATA|NOPTR, $32

DATA sqrt2h<>+0(SB)/8, $0x3FE6A09E667F3BCD
DATA sqrt2h<>+8(SB)/8, $0x3FE6A09E667F3BCD
DATA sqrt2h<>+16(SB)/8, $0x3FE6A09E667F3BCD
DATA sqrt2h<>+24(SB)/8, $0x3FE6A09E667F3BCD
GLOBL sqrt2h<>(SB), RODATA|NOPTR, $32

DATA one<>+0(SB)/8, $0x3FF0000000000000
DATA one<>+8(SB)/8, $0x3FF0000000000000
DATA one<>+16(SB)/8, $0x3FF0000000000000
DATA one<>+24(SB)/8, $0x3FF0000000000000
GLOBL one<>(SB), RODATA|NOPTR, $32

DATA two<>+0(SB)/8, $0x4000000000000000
DATA two<>+8(SB)/8, $0x4000000000000000
DATA two<>+16(SB)/8, $0x4000000000000000
DATA two<>+24(SB)/8, $0x4000000000000000
GLOBL two<>(SB), RODATA|NOPTR, $32

DATA c1022<>+0(SB)/8, $0x408FF00000000000
DATA c1022<>+8(SB)/8, $0x408FF00000000000
DATA c1022<>+16(SB)/8, $0x408FF00000000000
DATA c1022<>+24(SB)/8, $0x408FF00000000000
GLOBL c1022<>(SB), RODATA|NOPTR, $32

DATA minnorm<>+0(SB)/8, $0x0010000000000000
DATA minnorm<>+8(SB)/8, $0x0010000000000000
DATA minnorm<>+16(SB)/8, $0x0010000000000000
DATA minnorm<>+24(SB)/8, $0x0010000000000000
GLOBL minnorm<>(SB), RODATA|NOPTR, $32

DATA maxfin<>+0(SB)/8, $0x7FEFFFFFFFFFFFFF
DATA maxfin<>+8(SB)/8, $0x7FEFFFFFFFFFFFFF
DATA maxfin<>+16(SB)/8, $0x7FEFFFFFFFFFFFFF
DATA maxfin<>+24(SB)/8, $0x7FEFFFFFFFFFFFFF
GLOBL maxfin<>(SB), RODATA|NOPTR, $32

DATA lgL1<>+0(SB)/8, $0x3FE5555555555593
DATA lgL1<>+8(SB)/8, $0x3FE5555555555593
DATA lgL1<>+16(SB)/8, $0x3FE5555555555593
DATA lgL1<>+24(SB)/8, $0x3FE5555555555593
GLOBL lgL1<>(SB), RODATA|NOPTR, $32

DATA lgL2<>+0(SB)/8, $0x3FD999999997FA04
DATA lgL2<>+8(SB)/8, $0x3FD999999997FA04
DATA lgL2<>+16(SB)/8, $0x3FD999999997FA04
DATA lgL2<>+24(SB)/8, $0x3FD999999997FA04
GLOBL lgL2<>(SB), RODATA|NOPTR, $32

DATA lgL3<>+0(SB)/8, $0x3FD2492494229359
DATA lgL3<>+8(SB)/8, $0x3FD2492494229359
DATA lgL3<>+16(SB)/8, $0x3FD2492494229359
DATA lgL3<>+24(SB)/8, $0x3FD2492494229359
GLOBL lgL3<>(SB), RODATA|NOPTR, $32

DATA lgL4<>+0(SB)/8, $0x3FCC71C51D8E78AF
DATA lgL4<>+8(SB)/8, $0x3FCC71C51D8E78AF
DATA lgL4<>+16(SB)/8, $0x3FCC71C51D8E78AF
DATA lgL4<>+24(SB)/8, $0x3FCC71C51D8E78AF
GLOBL lgL4<>(SB), RODATA|NOPTR, $32

DATA lgL5<>+0(SB)/8, $0x3FC7466496CB03DE
DATA lgL5<>+8(SB)/8, $0x3FC7466496CB03DE
DATA lgL5<>+16(SB)/8, $0x3FC7466496CB03DE
DATA lgL5<>+24(SB)/8, $0x3FC7466496CB03DE
GLOBL lgL5<>(SB), RODATA|NOPTR, $32

DATA lgL6<>+0(SB)/8, $0x3FC39A09D078C69F
DATA lgL6<>+8(SB)/8, $0x3FC39A09D078C69F
DATA lgL6<>+16(SB)/8, $0x3FC39A09D078C69F
DATA lgL6<>+24(SB)/8, $0x3FC39A09D078C69F
GLOBL lgL6<>(SB), RODATA|NOPTR, $32

DATA lgL7<>+0(SB)/8, $0x3FC2F112DF3E5244
DATA lgL7<>+8(SB)/8, $0x3FC2F112DF3E5244
DATA lgL7<>+16(SB)/8, $0x3FC2F112DF3E5244
DATA lgL7<>+24(SB)/8, $0x3FC2F112DF3E5244
GLOBL lgL7<>(SB), RODATA|NOPTR, $32

DATA ln2hi<>+0(SB)/8, $0x3FE62E42FEE00000
DATA ln2hi<>+8(SB)/8, $0x3FE62E42FEE00000
DATA ln2hi<>+16(SB)/8, $0x3FE62E42FEE00000
DATA ln2hi<>+24(SB)/8, $0x3FE62E42FEE00000
GLOBL ln2hi<>(SB), RODATA|NOPTR, $32

DATA ln2lo<>+0(SB)/8, $0x3DEA39EF35793C76
DATA ln2lo<>+8(SB)/8, $0x3DEA39EF35793C76
DATA ln2lo<>+16(SB)/8, $0x3DEA39EF35793C76
DATA ln2lo<>+24(SB)/8, $0x3DEA39EF35793C76
GLOBL ln2lo<>(SB), RODATA|NOPTR, $32

// func blockTermsAsm(mu, n *float64, m int, sub float64) (sumNLog, sumMu float64, bad int)
//
// For i < m (a multiple of 4): sumNLog += n_i ln μ_i over bins with
// n_i ≠ 0, sumMu += μ_i over all bins, and μ_i is overwritten by
// n_i/μ_i − sub (non-empty) or −sub (empty). bad has a bit set for every
// lane that met a non-empty bin whose μ is not a positive normal finite
// number; the caller then redoes the block in Go.
TEXT ·blockTermsAsm(SB), NOSPLIT, $0-56
	MOVQ         mu+0(FP), SI
	MOVQ         n+8(FP), DI
	MOVQ         m+16(FP), CX
	SHLQ         $3, CX
	VBROADCASTSD sub+24(FP), Y11
	VXORPD       Y12, Y12, Y12 // Σ n ln μ
	VXORPD       Y13, Y13, Y13 // Σ μ
	VXORPD       Y14, Y14, Y14 // bad lanes
	XORQ         AX, AX

bloop:
	CMPQ    AX, CX
	JGE     bdone
	VMOVUPD (SI)(AX*1), Y0 // μ
	VMOVUPD (DI)(AX*1), Y1 // n
	VADDPD  Y0, Y13, Y13
	VXORPD  Y2, Y2, Y2
	VCMPPD  $4, Y2, Y1, Y3 // nz = n ≠ 0

	// bad |= nz & !(minnorm ≤ μ ≤ maxfin); NaN fails both comparisons.
	VCMPPD  $0x1D, minnorm<>(SB), Y0, Y4
	VCMPPD  $0x12, maxfin<>(SB), Y0, Y5
	VANDPD  Y5, Y4, Y4
	VANDNPD Y3, Y4, Y5
	VORPD   Y5, Y14, Y14

	// c = (n/μ masked to non-empty) − sub
	VDIVPD  Y0, Y1, Y6
	VANDPD  Y3, Y6, Y6
	VSUBPD  Y11, Y6, Y6
	VMOVUPD Y6, (SI)(AX*1)

	// ln μ: μ = f1·2^(E−1022), f1 ∈ [½, 1); if f1 < √2/2 double it.
	VPSRLQ $52, Y0, Y7
	VPOR   magic<>(SB), Y7, Y7
	VSUBPD magic<>(SB), Y7, Y7 // E as a float64
	VANDPD mant<>(SB), Y0, Y8
	VORPD  half<>(SB), Y8, Y8 // f1
	VCMPPD $1, sqrt2h<>(SB), Y8, Y9
	VANDPD Y9, Y8, Y10
	VADDPD Y10, Y8, Y8
	VANDPD one<>(SB), Y9, Y9
	VSUBPD Y9, Y7, Y7
	VSUBPD c1022<>(SB), Y7, Y7 // k
	VSUBPD one<>(SB), Y8, Y8   // f = f1 − 1
	VADDPD two<>(SB), Y8, Y9
	VDIVPD Y9, Y8, Y9          // s = f/(2+f)
	VMULPD Y9, Y9, Y10         // s²
	VMULPD Y10, Y10, Y2        // s⁴

	VMOVUPD     lgL7<>(SB), Y4
	VFMADD213PD lgL5<>(SB), Y2, Y4
	VFMADD213PD lgL3<>(SB), Y2, Y4
	VFMADD213PD lgL1<>(SB), Y2, Y4
	VMULPD      Y4, Y10, Y4 // t1
	VMOVUPD     lgL6<>(SB), Y5
	VFMADD213PD lgL4<>(SB), Y2, Y5
	VFMADD213PD lgL2<>(SB), Y2, Y5
	VMULPD      Y5, Y2, Y5 // t2
	VADDPD      Y5, Y4, Y4 // R

	VMULPD Y8, Y8, Y5
	VMULPD half<>(SB), Y5, Y5  // hfsq
	VADDPD Y5, Y4, Y4
	VMULPD Y4, Y9, Y4          // s(hfsq+R)
	VMULPD ln2lo<>(SB), Y7, Y10
	VADDPD Y10, Y4, Y4         // s(hfsq+R) + k·Ln2Lo
	VSUBPD Y4, Y5, Y4          // hfsq − (…)
	VSUBPD Y8, Y4, Y4          // (hfsq − (…)) − f
	VMULPD ln2hi<>(SB), Y7, Y10
	VSUBPD Y4, Y10, Y4         // ln μ

	VMULPD Y4, Y1, Y4
	VANDPD Y3, Y4, Y4
	VADDPD Y4, Y12, Y12
	ADDQ   $32, AX
	JMP    bloop

bdone:
	VEXTRACTF128 $1, Y12, X0
	VADDPD       X0, X12, X0
	VHADDPD      X0, X0, X0
	VMOVSD       X0, sumNLog+32(FP)
	VEXTRACTF128 $1, Y13, X0
	VADDPD       X0, X13, X0
	VHADDPD      X0, X0, X0
	VMOVSD       X0, sumMu+40(FP)
	VMOVMSKPD    Y14, AX
	MOVQ         AX, bad+48(FP)
	VZEROUPPER
	RET

// func cpuid(eaxArg, ecxArg uint32) (eax, ebx, ecx, edx uint32)
TEXT ·cpuid(SB), NOSPLIT, $0-24
	MOVL eaxArg+0(FP), AX
	MOVL ecxArg+4(FP), CX
	CPUID
	MOVL AX, eax+8(FP)
	MOVL BX, ebx+12(FP)
	MOVL CX, ecx+16(FP)
	MOVL DX, edx+20(FP)
	RET

// func xgetbv() (eax, edx uint32)
TEXT ·xgetbv(SB), NOSPLIT, $0-8
	MOVL $0, CX
	XGETBV
	MOVL AX, eax+0(FP)
	MOVL DX, edx+4(FP)
	RET
