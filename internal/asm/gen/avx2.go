package main

import "fmt"

// avx2 writes the AVX2+FMA kernels best2AVX2, best2RowAVX2 and
// fmaLoopAVX2. With sixteen ymm registers of four lanes the state of each
// row (best, second, index) lives in a stack scratch between center
// groups, and comparisons are blends instead of masked moves.
func avx2(a *asm) {
	a.p("")
	a.p("DATA two256<>+0(SB)/8, $0x4000000000000000")
	a.p("GLOBL two256<>(SB), RODATA|NOPTR, $8")
	for l := range 16 {
		v := "$-1"
		if l >= 8 {
			v = "$0"
		}
		a.p("DATA mask256<>+%d(SB)/8, %s", 8*l, v)
	}
	a.p("GLOBL mask256<>(SB), RODATA|NOPTR, $128")
	for l := range 4 {
		a.p("DATA iota256<>+%d(SB)/8, $%d", 8*l, l)
	}
	a.p("GLOBL iota256<>(SB), RODATA|NOPTR, $32")
	a.p("DATA four256<>+0(SB)/8, $4")
	a.p("GLOBL four256<>(SB), RODATA|NOPTR, $8")
	a.p("DATA inf256<>+0(SB)/8, $0x7FF0000000000000")
	a.p("GLOBL inf256<>(SB), RODATA|NOPTR, $8")
	best2AVX2(a)
	best2RowAVX2(a)
	fmaLoop(a, "fmaLoopAVX2", y, "VPXOR", 12)
}

// Stack scratch of best2AVX2: best, second, index of the eight rows of the
// tile at 0, 64 and 128(SP); the two half-panel row masks at 192, 224(SP).
//
// Registers:
//
//	CX  first row of the tile    DX  norm2
//	DI  x panel                  BX, R8 centers j…j+1, j+2…j+3
//	R9  center stride 8d         R11 byte offset in the x panel
//	R12 panel size 64d           R13 j          R14 j1
//	Y0–Y7 accumulators (rows 0–3 × 4 centers, rows 4–7 × 4 centers)
//	Y8, Y9 rows, Y10 broadcast; in merges Y8–Y10 state, Y11–Y14 temporaries
//	Y15 2.0
func best2AVX2(a *asm) {
	a.p("")
	a.p("// func best2AVX2(idx *int, best, second *float64, x *float64, m, d int, c, norm2 *float64, j0, j1 int)")
	a.p("TEXT ·best2AVX2(SB), NOSPLIT, $256-80")
	a.i("MOVQ d+40(FP), R9")
	a.i("SHLQ $3, R9")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $3, R12")
	a.i("VBROADCASTSD two256<>(SB), Y15")
	a.i("MOVQ norm2+56(FP), DX")
	a.i("MOVQ j1+72(FP), R14")
	a.i("XORQ CX, CX")
	a.p("rows256:")
	a.i("MOVQ m+32(FP), AX")
	a.i("SUBQ CX, AX")
	a.i("JLE done256")
	// Row masks: lanes below min(rows left, 8).
	a.i("MOVQ $8, BX")
	a.i("CMPQ AX, BX")
	a.i("CMOVQGT BX, AX")
	a.i("SUBQ AX, BX")
	a.i("LEAQ mask256<>(SB), AX")
	a.i("VMOVDQU (AX)(BX*8), Y11")
	a.i("VMOVDQU 32(AX)(BX*8), Y12")
	a.i("VMOVDQU Y11, 192(SP)")
	a.i("VMOVDQU Y12, 224(SP)")
	for _, f := range []struct{ arg, off string }{{"best+8(FP)", "0"}, {"second+16(FP)", "64"}, {"idx+0(FP)", "128"}} {
		a.i("MOVQ %s, AX", f.arg)
		a.i("VMASKMOVPD (AX)(CX*8), Y11, Y13")
		a.i("VMASKMOVPD 32(AX)(CX*8), Y12, Y14")
		a.i("VMOVUPD Y13, %s(SP)", f.off)
		a.i("VMOVUPD Y14, %s+32(SP)", f.off)
	}
	a.i("MOVQ CX, DI")
	a.i("IMULQ R9, DI")
	a.i("ADDQ x+24(FP), DI")
	a.i("MOVQ j0+64(FP), R13")
	for _, G := range []int{4, 1} {
		l := func(s string) string { return fmt.Sprintf("%s256g%d", s, G) }
		a.p("%s:", l("group"))
		a.i("MOVQ R14, AX")
		a.i("SUBQ R13, AX")
		a.i("CMPQ AX, $%d", G)
		a.i("JLT %s", l("next"))
		a.i("MOVQ R13, BX")
		a.i("IMULQ R9, BX")
		a.i("ADDQ c+48(FP), BX")
		a.i("LEAQ (BX)(R9*2), R8")
		for q := range G {
			a.i("VPXOR %s, %s, %s", y(q), y(q), y(q))
			a.i("VPXOR %s, %s, %s", y(4+q), y(4+q), y(4+q))
		}
		a.i("XORQ R11, R11")
		addr := []string{"(BX)", "(BX)(R9*1)", "(R8)", "(R8)(R9*1)"}
		a.p("%s:", l("t"))
		a.i("VMOVUPD (DI)(R11*1), Y8")
		a.i("VMOVUPD 32(DI)(R11*1), Y9")
		for q := range G {
			a.i("VBROADCASTSD %s, Y10", addr[q])
			a.i("VFMADD231PD Y10, Y8, %s", y(q))
			a.i("VFMADD231PD Y10, Y9, %s", y(4+q))
		}
		a.i("ADDQ $8, BX")
		a.i("ADDQ $8, R8")
		a.i("ADDQ $64, R11")
		a.i("CMPQ R11, R12")
		a.i("JLT %s", l("t"))
		for r := range 2 {
			off := 32 * r
			a.i("VMOVUPD %d(SP), Y8", off)
			a.i("VMOVUPD %d(SP), Y9", 64+off)
			a.i("VMOVUPD %d(SP), Y10", 128+off)
			for q := range G {
				acc := y(4*r + q)
				a.i("VBROADCASTSD %d(DX)(R13*8), Y11", 8*q)
				a.i("VFNMADD213PD Y11, Y15, %s", acc)
				a.i("VCMPPD $0x11, Y9, %s, Y13", acc)
				a.i("VCMPPD $0x11, Y8, %s, Y14", acc)
				a.i("LEAQ %d(R13), AX", q)
				a.i("MOVQ AX, X12")
				a.i("VPBROADCASTQ X12, Y12")
				a.i("VBLENDVPD Y13, %s, Y9, Y9", acc)
				a.i("VBLENDVPD Y14, Y8, Y9, Y9")
				a.i("VBLENDVPD Y14, %s, Y8, Y8", acc)
				a.i("VBLENDVPD Y14, Y12, Y10, Y10")
			}
			a.i("VMOVUPD Y8, %d(SP)", off)
			a.i("VMOVUPD Y9, %d(SP)", 64+off)
			a.i("VMOVUPD Y10, %d(SP)", 128+off)
		}
		a.i("ADDQ $%d, R13", G)
		a.i("JMP %s", l("group"))
		a.p("%s:", l("next"))
	}
	a.i("VMOVDQU 192(SP), Y11")
	a.i("VMOVDQU 224(SP), Y12")
	for _, f := range []struct{ arg, off string }{{"best+8(FP)", "0"}, {"second+16(FP)", "64"}, {"idx+0(FP)", "128"}} {
		a.i("MOVQ %s, AX", f.arg)
		a.i("VMOVUPD %s(SP), Y13", f.off)
		a.i("VMOVUPD %s+32(SP), Y14", f.off)
		a.i("VMASKMOVPD Y13, Y11, (AX)(CX*8)")
		a.i("VMASKMOVPD Y14, Y12, 32(AX)(CX*8)")
	}
	a.i("ADDQ $8, CX")
	a.i("JMP rows256")
	a.p("done256:")
	a.i("VZEROUPPER")
	a.i("RET")
}

// Stack scratch of best2RowAVX2: lane best, second, index of the eight
// center lanes at 0, 64 and 128(SP); ‖x−shift‖² at 192(SP).
//
// Registers:
//
//	SI  x  CX shift  R9 d     AX t        DI panel group   BX centers at t
//	R12 panel size 64d        DX norm2 of the group         R13 panels left
//	R10 index of the group's first center
//	Y0–Y7 accumulators (two panels × two halves × even/odd t)
//	Y14, Y15 broadcasts, X10, X11 ‖x−shift‖² of even and odd t;
//	in merges Y8–Y10 state, Y11–Y15 temporaries
func best2RowAVX2(a *asm) {
	a.p("")
	a.p("// func best2RowAVX2(x, shift *float64, d int, c, norm2 *float64, k, exclude int) (j int, best, second, r2 float64)")
	a.p("TEXT ·best2RowAVX2(SB), NOSPLIT, $200-88")
	a.i("MOVQ x+0(FP), SI")
	a.i("MOVQ shift+8(FP), CX")
	a.i("MOVQ d+16(FP), R9")
	a.i("MOVQ c+24(FP), DI")
	a.i("MOVQ norm2+32(FP), DX")
	a.i("MOVQ R9, R12")
	a.i("SHLQ $6, R12")
	a.i("MOVQ k+40(FP), R13")
	a.i("ADDQ $7, R13")
	a.i("SHRQ $3, R13")
	a.i("XORQ R10, R10")
	a.i("VBROADCASTSD inf256<>(SB), Y8")
	a.i("VPXOR Y10, Y10, Y10")
	for _, off := range []int{0, 32, 64, 96} {
		a.i("VMOVUPD Y8, %d(SP)", off)
	}
	a.i("VMOVUPD Y10, 128(SP)")
	a.i("VMOVUPD Y10, 160(SP)")
	for _, G := range []int{2, 1} {
		l := func(s string) string { return fmt.Sprintf("%srow256g%d", s, G) }
		a.p("%s:", l("group"))
		a.i("CMPQ R13, $%d", G)
		a.i("JLT %s", l("next"))
		// acc(p, h, e): panel p, half h, t parity e.
		acc := func(p, h, e int) string { return y(4*e + 2*p + h) }
		for p := range G {
			for h := range 2 {
				for e := range 2 {
					a.i("VPXOR %s, %s, %s", acc(p, h, e), acc(p, h, e), acc(p, h, e))
				}
			}
		}
		a.i("MOVQ DI, BX")
		a.i("XORQ AX, AX")
		a.i("VXORPD X10, X10, X10")
		a.i("VXORPD X11, X11, X11")
		a.p("%s:", l("t2"))
		a.i("LEAQ 2(AX), R8")
		a.i("CMPQ R8, R9")
		a.i("JGT %s", l("t1"))
		a.i("VMOVSD (SI)(AX*8), X14")
		a.i("VMOVSD 8(SI)(AX*8), X15")
		a.i("VSUBSD (CX)(AX*8), X14, X14")
		a.i("VSUBSD 8(CX)(AX*8), X15, X15")
		a.i("VFMADD231SD X14, X14, X10")
		a.i("VFMADD231SD X15, X15, X11")
		a.i("VBROADCASTSD X14, Y14")
		a.i("VBROADCASTSD X15, Y15")
		for e := range 2 {
			for p := range G {
				for h := range 2 {
					bc := "Y14"
					if e == 1 {
						bc = "Y15"
					}
					a.i("VFMADD231PD %d%s, %s, %s", 64*e+32*h, panelAddr(p), bc, acc(p, h, e))
				}
			}
		}
		a.i("ADDQ $128, BX")
		a.i("MOVQ R8, AX")
		a.i("JMP %s", l("t2"))
		a.p("%s:", l("t1"))
		a.i("CMPQ AX, R9")
		a.i("JGE %s", l("merge"))
		a.i("VMOVSD (SI)(AX*8), X14")
		a.i("VSUBSD (CX)(AX*8), X14, X14")
		a.i("VFMADD231SD X14, X14, X10")
		a.i("VBROADCASTSD X14, Y14")
		for p := range G {
			for h := range 2 {
				a.i("VFMADD231PD %d%s, Y14, %s", 32*h, panelAddr(p), acc(p, h, 0))
			}
		}
		a.p("%s:", l("merge"))
		a.i("VADDSD X11, X10, X10")
		a.i("VMOVSD X10, 192(SP)")
		for p := range G {
			for h := range 2 {
				v := acc(p, h, 0)
				off := 32 * h
				a.i("VADDPD %s, %s, %s", acc(p, h, 1), v, v)
				a.i("VMOVUPD %d(SP), Y8", off)
				a.i("VMOVUPD %d(SP), Y9", 64+off)
				a.i("VMOVUPD %d(SP), Y10", 128+off)
				a.i("VMOVUPD %d(DX), Y11", 64*p+off)
				a.i("VADDPD %s, %s, %s", v, v, v) // 2·dot, exact
				a.i("VSUBPD %s, Y11, Y11", v)     // norm2 − 2·dot
				// Lanes in range: index < k and index != exclude.
				a.i("LEAQ %d(R10), AX", 8*p+4*h)
				a.i("MOVQ AX, X12")
				a.i("VPBROADCASTQ X12, Y12")
				a.i("VPADDQ iota256<>(SB), Y12, Y12")
				a.i("VPBROADCASTQ k+40(FP), Y13")
				a.i("VPCMPGTQ Y12, Y13, Y13")
				a.i("VPBROADCASTQ exclude+48(FP), Y14")
				a.i("VPCMPEQQ Y12, Y14, Y14")
				a.i("VPANDN Y13, Y14, Y13")
				a.i("VCMPPD $0x11, Y9, Y11, Y14")
				a.i("VANDPD Y13, Y14, Y14")
				a.i("VCMPPD $0x11, Y8, Y11, Y15")
				a.i("VANDPD Y13, Y15, Y15")
				a.i("VBLENDVPD Y14, Y11, Y9, Y9")
				a.i("VBLENDVPD Y15, Y8, Y9, Y9")
				a.i("VBLENDVPD Y15, Y11, Y8, Y8")
				a.i("VBLENDVPD Y15, Y12, Y10, Y10")
				a.i("VMOVUPD Y8, %d(SP)", off)
				a.i("VMOVUPD Y9, %d(SP)", 64+off)
				a.i("VMOVUPD Y10, %d(SP)", 128+off)
			}
		}
		if G == 2 {
			a.i("LEAQ (DI)(R12*2), DI")
		} else {
			a.i("ADDQ R12, DI")
		}
		a.i("ADDQ $%d, DX", 64*G)
		a.i("ADDQ $%d, R10", 8*G)
		a.i("SUBQ $%d, R13", G)
		a.i("JMP %s", l("group"))
		a.p("%s:", l("next"))
	}
	a.i("VMOVSD 192(SP), X0")
	a.i("VMOVSD X0, r2+80(FP)")
	// Reduce: the upper half into the lower, then the 128-bit halves,
	// then neighbours.
	a.i("VMOVUPD 0(SP), Y0")
	a.i("VMOVUPD 64(SP), Y1")
	a.i("VMOVUPD 128(SP), Y2")
	a.i("VMOVUPD 32(SP), Y3")
	a.i("VMOVUPD 96(SP), Y4")
	a.i("VMOVUPD 160(SP), Y5")
	merge := func() {
		a.i("VCMPPD $0x11, Y0, Y3, Y6") // b2 < b1
		a.i("VCMPPD $0x00, Y0, Y3, Y7") // b2 == b1
		a.i("VPCMPGTQ Y5, Y2, Y8")      // i1 > i2
		a.i("VANDPD Y7, Y8, Y8")
		a.i("VORPD Y6, Y8, Y6")
		a.i("VMAXPD Y0, Y3, Y7")
		a.i("VMINPD Y1, Y4, Y4")
		a.i("VMINPD Y7, Y4, Y1")
		a.i("VBLENDVPD Y6, Y3, Y0, Y0")
		a.i("VBLENDVPD Y6, Y5, Y2, Y2")
	}
	merge()
	for _, sw := range []string{"VPERM2F128 $0x01, %[1]s, %[1]s, %[2]s", "VPERMILPD $0x05, %[1]s, %[2]s"} {
		a.i(sw, "Y0", "Y3")
		a.i(sw, "Y1", "Y4")
		a.i(sw, "Y2", "Y5")
		merge()
	}
	a.i("VMOVQ X2, AX")
	a.i("MOVQ AX, j+56(FP)")
	a.i("VMOVSD X0, best+64(FP)")
	a.i("VMOVSD X1, second+72(FP)")
	a.i("VZEROUPPER")
	a.i("RET")
}

// panelAddr is the address of panel p of the group at BX.
func panelAddr(p int) string {
	if p == 0 {
		return "(BX)"
	}
	return "(BX)(R12*1)"
}
