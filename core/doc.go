// Package core is ClearKit's numerical library: the dialyzer mass-transfer
// model and the calculations built on it. It is pure Go with no I/O and no
// syscall/js, so every function can be tested natively and compiled to
// WebAssembly unchanged.
//
// # Conventions
//
// Flows (QB, QD, QF), clearance, dialysance and KoA are in mL/min.
// Concentrations are in any one unit chosen by the caller; results that are
// concentrations come back in that unit, and the mass transfer rate in that
// unit times mL/min.
//
// The flow model is Michaels' (Trans ASAIO 1966;12:387-392): the local
// balance dW = K0 (CB - CD) dA = -QB dCB = ±QD dCD integrated over the
// membrane. It is written in the heat-exchanger effectiveness-NTU form
// (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, ch. 11), with
// Cmin = min(QB, QD), Cmax = max(QB, QD), Cr = Cmin/Cmax and
// NTU = KoA/Cmin, and evaluated with expm1 and log1p so that it stays
// accurate at QB = QD, at KoA = 0 and at very large KoA.
//
// Bad input never panics: functions return a *FieldError naming the
// offending field.
package core
