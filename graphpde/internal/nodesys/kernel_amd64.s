#include "textflag.h"

// Dense update kernels of the supernodal factorisation on AVX2 with fused
// multiply-add: four rows per instruction, scalar fused operations for the
// remainder. The Go declarations and the pure Go equivalents are in
// kernel_amd64.go and supernodal.go.

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

// func axpy4x2FMA(d0, d1, a, b, c, e *float64, n int, co *[8]float64)
//
// d0[i] += a[i]·co[0] + b[i]·co[1] + c[i]·co[2] + e[i]·co[3],
// d1[i] += a[i]·co[4] + b[i]·co[5] + c[i]·co[6] + e[i]·co[7], i < n.
TEXT ·axpy4x2FMA(SB), NOSPLIT, $0-64
	MOVQ d0+0(FP), DI
	MOVQ d1+8(FP), SI
	MOVQ a+16(FP), R8
	MOVQ b+24(FP), R9
	MOVQ c+32(FP), R10
	MOVQ e+40(FP), R11
	MOVQ n+48(FP), CX
	MOVQ co+56(FP), AX
	VBROADCASTSD 0(AX), Y0
	VBROADCASTSD 8(AX), Y1
	VBROADCASTSD 16(AX), Y2
	VBROADCASTSD 24(AX), Y3
	VBROADCASTSD 32(AX), Y4
	VBROADCASTSD 40(AX), Y5
	VBROADCASTSD 48(AX), Y6
	VBROADCASTSD 56(AX), Y7
	XORQ BX, BX
	MOVQ CX, DX
	ANDQ $-4, DX
	JZ   x2tail

x2loop:
	VMOVUPD (R8)(BX*8), Y8
	VMOVUPD (R9)(BX*8), Y9
	VMOVUPD (R10)(BX*8), Y10
	VMOVUPD (R11)(BX*8), Y11
	VMULPD  Y8, Y0, Y12
	VMULPD  Y8, Y4, Y13
	VFMADD231PD Y9, Y1, Y12
	VFMADD231PD Y9, Y5, Y13
	VFMADD231PD Y10, Y2, Y12
	VFMADD231PD Y10, Y6, Y13
	VFMADD231PD Y11, Y3, Y12
	VFMADD231PD Y11, Y7, Y13
	VADDPD  (DI)(BX*8), Y12, Y12
	VADDPD  (SI)(BX*8), Y13, Y13
	VMOVUPD Y12, (DI)(BX*8)
	VMOVUPD Y13, (SI)(BX*8)
	ADDQ $4, BX
	CMPQ BX, DX
	JLT  x2loop

x2tail:
	CMPQ BX, CX
	JGE  x2done
	VMOVSD (R8)(BX*8), X8
	VMOVSD (R9)(BX*8), X9
	VMOVSD (R10)(BX*8), X10
	VMOVSD (R11)(BX*8), X11
	VMULSD  X8, X0, X12
	VMULSD  X8, X4, X13
	VFMADD231SD X9, X1, X12
	VFMADD231SD X9, X5, X13
	VFMADD231SD X10, X2, X12
	VFMADD231SD X10, X6, X13
	VFMADD231SD X11, X3, X12
	VFMADD231SD X11, X7, X13
	VADDSD  (DI)(BX*8), X12, X12
	VADDSD  (SI)(BX*8), X13, X13
	VMOVSD  X12, (DI)(BX*8)
	VMOVSD  X13, (SI)(BX*8)
	INCQ BX
	JMP  x2tail

x2done:
	VZEROUPPER
	RET

// func axpy4FMA(dst, a, b, c, e *float64, n int, co *[4]float64)
//
// dst[i] += a[i]·co[0] + b[i]·co[1] + c[i]·co[2] + e[i]·co[3], i < n.
TEXT ·axpy4FMA(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ a+8(FP), R8
	MOVQ b+16(FP), R9
	MOVQ c+24(FP), R10
	MOVQ e+32(FP), R11
	MOVQ n+40(FP), CX
	MOVQ co+48(FP), AX
	VBROADCASTSD 0(AX), Y0
	VBROADCASTSD 8(AX), Y1
	VBROADCASTSD 16(AX), Y2
	VBROADCASTSD 24(AX), Y3
	XORQ BX, BX
	MOVQ CX, DX
	ANDQ $-4, DX
	JZ   x4tail

x4loop:
	VMULPD  (R8)(BX*8), Y0, Y12
	VFMADD231PD (R9)(BX*8), Y1, Y12
	VFMADD231PD (R10)(BX*8), Y2, Y12
	VFMADD231PD (R11)(BX*8), Y3, Y12
	VADDPD  (DI)(BX*8), Y12, Y12
	VMOVUPD Y12, (DI)(BX*8)
	ADDQ $4, BX
	CMPQ BX, DX
	JLT  x4loop

x4tail:
	CMPQ BX, CX
	JGE  x4done
	VMULSD  (R8)(BX*8), X0, X12
	VFMADD231SD (R9)(BX*8), X1, X12
	VFMADD231SD (R10)(BX*8), X2, X12
	VFMADD231SD (R11)(BX*8), X3, X12
	VADDSD  (DI)(BX*8), X12, X12
	VMOVSD  X12, (DI)(BX*8)
	INCQ BX
	JMP  x4tail

x4done:
	VZEROUPPER
	RET

// func axpy2FMA(dst, a, b *float64, n int, ca, cb float64)
//
// dst[i] += a[i]·ca + b[i]·cb, i < n.
TEXT ·axpy2FMA(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ a+8(FP), R8
	MOVQ b+16(FP), R9
	MOVQ n+24(FP), CX
	VBROADCASTSD ca+32(FP), Y0
	VBROADCASTSD cb+40(FP), Y1
	XORQ BX, BX
	MOVQ CX, DX
	ANDQ $-4, DX
	JZ   x2btail

x2bloop:
	VMULPD  (R8)(BX*8), Y0, Y12
	VFMADD231PD (R9)(BX*8), Y1, Y12
	VADDPD  (DI)(BX*8), Y12, Y12
	VMOVUPD Y12, (DI)(BX*8)
	ADDQ $4, BX
	CMPQ BX, DX
	JLT  x2bloop

x2btail:
	CMPQ BX, CX
	JGE  x2bdone
	VMULSD  (R8)(BX*8), X0, X12
	VFMADD231SD (R9)(BX*8), X1, X12
	VADDSD  (DI)(BX*8), X12, X12
	VMOVSD  X12, (DI)(BX*8)
	INCQ BX
	JMP  x2btail

x2bdone:
	VZEROUPPER
	RET
