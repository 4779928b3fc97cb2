package main

import "fmt"

// avx512 writes the AVX-512 kernels best2AVX512, best2RowAVX512 and
// fmaLoopAVX512.
//
// best2AVX512 vectorises over rows: one zmm holds coordinate t of the
// eight rows of a panel, and a center's coordinate is broadcast. A tile is
// two panels of rows (16 rows) × 8 centers: 16 accumulators, and each row's
// best, second and index live in registers as lanes, so that the fused
// argmin is a handful of masked moves per center and never needs a
// reduction across lanes.
func avx512(a *asm) {
	a.p("")
	a.p("DATA two512<>+0(SB)/8, $0x4000000000000000")
	a.p("GLOBL two512<>(SB), RODATA|NOPTR, $8")
	a.p("DATA iota512<>+0(SB)/8, $0")
	for l := 1; l < 8; l++ {
		a.p("DATA iota512<>+%d(SB)/8, $%d", 8*l, l)
	}
	a.p("GLOBL iota512<>(SB), RODATA|NOPTR, $64")
	a.p("DATA eight512<>+0(SB)/8, $8")
	a.p("GLOBL eight512<>(SB), RODATA|NOPTR, $8")
	best2AVX512(a)
	best2RowAVX512(a)
	packShiftAVX512(a)
	affineAVX512(a)
	fmaLoop(a, "fmaLoopAVX512", z, "VPXORQ", 12)
}

// Registers of best2AVX512.
//
//	CX  first row of the tile          DX  norm2
//	DI  x panel of rows 0–7            SI  x panel of rows 8–15
//	BX  centers j…j+3 (C0)             R8  centers j+4…j+7 (C4)
//	R9  center stride 8d               R10 3·8d
//	R11 byte offset in the x panel     R12 panel size 64d
//	R13 j                              R14 j1
//	Z0–Z15 accumulators   Z16, Z17 rows   Z18, Z19 broadcasts
//	Z20–Z22 best, second, index of rows 0–7, Z23–Z25 of rows 8–15
//	Z26 2.0               K1, K2 comparisons, K3, K4 row masks
func best2AVX512(a *asm) {
	a.p("")
	a.p("// func best2AVX512(idx *int, best, second *float64, x *float64, m, d int, c, norm2 *float64, j0, j1 int)")
	a.p("TEXT ·best2AVX512(SB), NOSPLIT, $0-80")
	a.i("MOVQ d+40(FP), R9")
	a.i("SHLQ $3, R9")
	a.i("LEAQ (R9)(R9*2), R10")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $3, R12")
	a.i("VBROADCASTSD two512<>(SB), Z26")
	a.i("MOVQ norm2+56(FP), DX")
	a.i("MOVQ j1+72(FP), R14")
	a.i("XORQ CX, CX")
	a.p("rows512:")
	a.i("MOVQ m+32(FP), AX")
	a.i("SUBQ CX, AX")
	a.i("JLE done512")
	a.i("MOVL $0xFF, BX")
	a.i("CMPQ AX, $8")
	a.i("JLE one512")
	a.i("KMOVW BX, K3")
	a.i("SUBQ $8, AX")
	a.i("MOVQ $8, R8")
	a.i("CMPQ AX, $8")
	a.i("CMOVQGT R8, AX")
	a.i("BZHIQ AX, BX, BX")
	a.i("KMOVW BX, K4")
	tile512(a, 2)
	a.i("ADDQ $16, CX")
	a.i("JMP rows512")
	a.p("one512:")
	a.i("BZHIQ AX, BX, BX")
	a.i("KMOVW BX, K3")
	tile512(a, 1)
	a.i("ADDQ $8, CX")
	a.i("JMP rows512")
	a.p("done512:")
	a.i("VZEROUPPER")
	a.i("RET")
}

// state512 returns the best, second and index registers of row panel r.
func state512(r int) (b, s, ix string) { return z(20 + 3*r), z(21 + 3*r), z(22 + 3*r) }

// tile512 writes the loop over all centers for R panels of rows (R = 1, 2).
func tile512(a *asm, R int) {
	l := func(s string) string { return fmt.Sprintf("%s512r%d", s, R) }
	masks := []string{"K3", "K4"}
	for r := range R {
		b, s, ix := state512(r)
		off := 64 * r
		a.i("MOVQ best+8(FP), AX")
		a.i("VMOVUPD.Z %d(AX)(CX*8), %s, %s", off, masks[r], b)
		a.i("MOVQ second+16(FP), AX")
		a.i("VMOVUPD.Z %d(AX)(CX*8), %s, %s", off, masks[r], s)
		a.i("MOVQ idx+0(FP), AX")
		a.i("VMOVDQU64.Z %d(AX)(CX*8), %s, %s", off, masks[r], ix)
	}
	a.i("MOVQ CX, DI")
	a.i("IMULQ R9, DI")
	a.i("ADDQ x+24(FP), DI")
	a.i("LEAQ (DI)(R12*1), SI")
	a.i("MOVQ j0+64(FP), R13")
	// Groups of eight centers.
	a.p("%s:", l("g8"))
	a.i("MOVQ R14, AX")
	a.i("SUBQ R13, AX")
	a.i("CMPQ AX, $8")
	a.i("JLT %s", l("g1"))
	a.i("MOVQ R13, BX")
	a.i("IMULQ R9, BX")
	a.i("ADDQ c+48(FP), BX")
	a.i("LEAQ (BX)(R9*4), R8")
	for q := range 8 * R {
		a.i("VPXORQ %s, %s, %s", z(q), z(q), z(q))
	}
	a.i("XORQ R11, R11")
	addr := []string{"(BX)", "(BX)(R9*1)", "(BX)(R9*2)", "(BX)(R10*1)", "(R8)", "(R8)(R9*1)", "(R8)(R9*2)", "(R8)(R10*1)"}
	a.p("%s:", l("t8"))
	a.i("VMOVUPD (DI)(R11*1), Z16")
	if R == 2 {
		a.i("VMOVUPD (SI)(R11*1), Z17")
	}
	for q := range 8 {
		bc := z(18 + q%2)
		a.i("VBROADCASTSD %s, %s", addr[q], bc)
		a.i("VFMADD231PD %s, Z16, %s", bc, z(q))
		if R == 2 {
			a.i("VFMADD231PD %s, Z17, %s", bc, z(8+q))
		}
	}
	a.i("ADDQ $8, BX")
	a.i("ADDQ $8, R8")
	a.i("ADDQ $64, R11")
	a.i("CMPQ R11, R12")
	a.i("JLT %s", l("t8"))
	for q := range 8 {
		for r := range R {
			merge512(a, R, z(8*r+q), r, q)
		}
	}
	a.i("ADDQ $8, R13")
	a.i("JMP %s", l("g8"))
	// Remaining centers one at a time.
	a.p("%s:", l("g1"))
	a.i("CMPQ R13, R14")
	a.i("JGE %s", l("end"))
	a.i("MOVQ R13, BX")
	a.i("IMULQ R9, BX")
	a.i("ADDQ c+48(FP), BX")
	a.i("VPXORQ Z0, Z0, Z0")
	a.i("VPXORQ Z8, Z8, Z8")
	a.i("XORQ R11, R11")
	a.p("%s:", l("t1"))
	a.i("VBROADCASTSD (BX), Z18")
	a.i("VFMADD231PD (DI)(R11*1), Z18, Z0")
	if R == 2 {
		a.i("VFMADD231PD (SI)(R11*1), Z18, Z8")
	}
	a.i("ADDQ $8, BX")
	a.i("ADDQ $64, R11")
	a.i("CMPQ R11, R12")
	a.i("JLT %s", l("t1"))
	for r := range R {
		merge512(a, R, z(8*r), r, 0)
	}
	a.i("INCQ R13")
	a.i("JMP %s", l("g1"))
	a.p("%s:", l("end"))
	for r := range R {
		b, s, ix := state512(r)
		off := 64 * r
		a.i("MOVQ best+8(FP), AX")
		a.i("VMOVUPD %s, %s, %d(AX)(CX*8)", b, masks[r], off)
		a.i("MOVQ second+16(FP), AX")
		a.i("VMOVUPD %s, %s, %d(AX)(CX*8)", s, masks[r], off)
		a.i("MOVQ idx+0(FP), AX")
		a.i("VMOVDQU64 %s, %s, %d(AX)(CX*8)", ix, masks[r], off)
	}
}

// merge512 turns accumulator acc (dot products with center j+q, j in R13)
// into norm2 − 2·dot and records it in the state of row panel r.
func merge512(a *asm, R int, acc string, r, q int) {
	b, s, ix := state512(r)
	a.i("VFNMADD213PD.BCST %d(DX)(R13*8), Z26, %s", 8*q, acc)
	a.i("VCMPPD $0x11, %s, %s, K2", s, acc)
	a.i("VCMPPD $0x11, %s, %s, K1", b, acc)
	a.i("VMOVAPD %s, K2, %s", acc, s)
	a.i("VMOVAPD %s, K1, %s", b, s)
	a.i("VMOVAPD %s, K1, %s", acc, b)
	a.i("LEAQ %d(R13), AX", q)
	a.i("VPBROADCASTQ AX, K1, %s", ix)
}

// Registers of best2RowAVX512.
//
//	SI  x   CX shift   R9  d            AX  t
//	DI  panel group    BX  centers at t R12 panel size 64d   R10 3·64d
//	DX  norm2 of the group               R13 panels left
//	Z0–Z3 accumulators of even t, Z4–Z7 of odd t, Z16, Z17 broadcasts
//	Z20 best, Z21 second, Z22 index, Z23 center indices, Z24 eight,
//	Z25 k, Z26 2.0, Z27 exclude, X28, X29 ‖x−shift‖² of even and odd t;
//	K5 lanes in range, K1, K2 comparisons
func best2RowAVX512(a *asm) {
	a.p("")
	a.p("// func best2RowAVX512(x, shift *float64, d int, c, norm2 *float64, k, exclude int) (j int, best, second, r2 float64)")
	a.p("TEXT ·best2RowAVX512(SB), NOSPLIT, $0-88")
	a.i("MOVQ x+0(FP), SI")
	a.i("MOVQ shift+8(FP), CX")
	a.i("MOVQ d+16(FP), R9")
	a.i("MOVQ c+24(FP), DI")
	a.i("MOVQ norm2+32(FP), DX")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $6, R12")
	a.i("LEAQ (R12)(R12*2), R10")
	a.i("MOVQ k+40(FP), R13")
	a.i("VPBROADCASTQ R13, Z25")
	a.i("ADDQ $7, R13")
	a.i("SHRQ $3, R13")
	a.i("MOVQ exclude+48(FP), AX")
	a.i("VPBROADCASTQ AX, Z27")
	a.i("VBROADCASTSD two512<>(SB), Z26")
	a.i("VPBROADCASTQ eight512<>(SB), Z24")
	a.i("VMOVDQU64 iota512<>(SB), Z23")
	a.i("MOVQ $0x7FF0000000000000, AX")
	a.i("VPBROADCASTQ AX, Z20")
	a.i("VMOVAPD Z20, Z21")
	a.i("VPXORQ Z22, Z22, Z22")
	for _, G := range []int{4, 1} {
		l := func(s string) string { return fmt.Sprintf("%srow512g%d", s, G) }
		panel := []string{"(BX)", "(BX)(R12*1)", "(BX)(R12*2)", "(BX)(R10*1)"}
		a.p("%s:", l("group"))
		a.i("CMPQ R13, $%d", G)
		a.i("JLT %s", l("next"))
		for q := range 2 * G {
			r := q%G + 4*(q/G)
			a.i("VPXORQ %s, %s, %s", z(r), z(r), z(r))
		}
		a.i("MOVQ DI, BX")
		a.i("XORQ AX, AX")
		a.i("VPXORQ Z28, Z28, Z28")
		a.i("VPXORQ Z29, Z29, Z29")
		a.p("%s:", l("t2"))
		a.i("LEAQ 2(AX), R8")
		a.i("CMPQ R8, R9")
		a.i("JGT %s", l("t1"))
		a.i("VMOVSD (SI)(AX*8), X16")
		a.i("VMOVSD 8(SI)(AX*8), X17")
		a.i("VSUBSD (CX)(AX*8), X16, X16")
		a.i("VSUBSD 8(CX)(AX*8), X17, X17")
		a.i("VFMADD231SD X16, X16, X28")
		a.i("VFMADD231SD X17, X17, X29")
		a.i("VBROADCASTSD X16, Z16")
		a.i("VBROADCASTSD X17, Z17")
		for q := range G {
			a.i("VFMADD231PD %s, Z16, %s", panel[q], z(q))
		}
		for q := range G {
			a.i("VFMADD231PD 64%s, Z17, %s", panel[q], z(4+q))
		}
		a.i("ADDQ $128, BX")
		a.i("MOVQ R8, AX")
		a.i("JMP %s", l("t2"))
		a.p("%s:", l("t1"))
		a.i("CMPQ AX, R9")
		a.i("JGE %s", l("merge"))
		a.i("VMOVSD (SI)(AX*8), X16")
		a.i("VSUBSD (CX)(AX*8), X16, X16")
		a.i("VFMADD231SD X16, X16, X28")
		a.i("VBROADCASTSD X16, Z16")
		for q := range G {
			a.i("VFMADD231PD %s, Z16, %s", panel[q], z(q))
		}
		a.p("%s:", l("merge"))
		a.i("VADDSD X29, X28, X28")
		for q := range G {
			acc := z(q)
			a.i("VADDPD %s, %s, %s", z(4+q), acc, acc)
			a.i("VFNMADD213PD %d(DX), Z26, %s", 64*q, acc)
			a.i("VPCMPQ $1, Z25, Z23, K5")
			a.i("VPCMPQ $4, Z27, Z23, K5, K5")
			a.i("VCMPPD $0x11, Z21, %s, K5, K2", acc)
			a.i("VCMPPD $0x11, Z20, %s, K5, K1", acc)
			a.i("VMOVAPD %s, K2, Z21", acc)
			a.i("VMOVAPD Z20, K1, Z21")
			a.i("VMOVAPD %s, K1, Z20", acc)
			a.i("VMOVDQA64 Z23, K1, Z22")
			a.i("VPADDQ Z24, Z23, Z23")
		}
		if G == 4 {
			a.i("LEAQ (DI)(R12*4), DI")
		} else {
			a.i("ADDQ R12, DI")
		}
		a.i("ADDQ $%d, DX", 64*G)
		a.i("SUBQ $%d, R13", G)
		a.i("JMP %s", l("group"))
		a.p("%s:", l("next"))
	}
	a.i("VMOVSD X28, r2+80(FP)")
	// Reduce the lanes: swap halves, quarters, then neighbours, merging
	// (best, second, index) pairwise each time; every lane ends with the
	// answer.
	for _, sw := range []string{"VSHUFF64X2 $0x4E, %[1]s, %[1]s, %[2]s", "VSHUFF64X2 $0xB1, %[1]s, %[1]s, %[2]s", "VPERMILPD $0x55, %[1]s, %[2]s"} {
		a.i(sw, "Z20", "Z28")
		a.i(sw, "Z21", "Z29")
		a.i(sw, "Z22", "Z30")
		a.i("VCMPPD $0x11, Z20, Z28, K1")  // b2 < b1
		a.i("VCMPPD $0x00, Z20, Z28, K2")  // b2 == b1
		a.i("VPCMPQ $1, Z22, Z30, K2, K3") // and i2 < i1
		a.i("KORW K1, K3, K1")
		a.i("VMAXPD Z20, Z28, Z31")
		a.i("VMINPD Z21, Z29, Z29")
		a.i("VMINPD Z31, Z29, Z21")
		a.i("VMOVAPD Z28, K1, Z20")
		a.i("VMOVDQA64 Z30, K1, Z22")
	}
	a.i("VMOVQ X22, AX")
	a.i("MOVQ AX, j+56(FP)")
	a.i("VMOVSD X20, best+64(FP)")
	a.i("VMOVSD X21, second+72(FP)")
	a.i("VZEROUPPER")
	a.i("RET")
}

// fmaLoop writes name(n int): n iterations of chains independent chains
// of vector fused multiply-adds (the peak-rate reference of benchmarks).
func fmaLoop(a *asm, name string, reg func(int) string, zero string, chains int) {
	a.p("")
	a.p("// func %s(n int)", name)
	a.p("TEXT ·%s(SB), NOSPLIT, $0-8", name)
	a.i("MOVQ n+0(FP), CX")
	for q := range chains + 2 {
		a.i("%s %s, %s, %s", zero, reg(q), reg(q), reg(q))
	}
	a.p("%sloop:", name)
	a.i("TESTQ CX, CX")
	a.i("JLE %sdone", name)
	for q := range chains {
		a.i("VFMADD231PD %s, %s, %s", reg(chains), reg(chains+1), reg(q))
	}
	a.i("DECQ CX")
	a.i("JMP %sloop", name)
	a.p("%sdone:", name)
	a.i("VZEROUPPER")
	a.i("RET")
}
