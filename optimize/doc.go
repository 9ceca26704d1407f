// Package optimize relaxes molecular structures to the nearest minimum of a
// potential-energy surface (gradient.Surface): quasi-Newton steps in
// redundant internal coordinates, one energy and gradient per step, no line
// searches.
//
// # Coordinates
//
// The steps are taken in redundant internal coordinates (C. Peng,
// P. Y. Ayala, H. B. Schlegel, M. J. Frisch, J. Comput. Chem. 17, 49
// (1996); V. Bakken, T. Helgaker, J. Chem. Phys. 117, 9160 (2002)):
// bonds from covalent radii (B. Cordero et al., Dalton Trans. 2008, 2832)
// and bonds that join separate fragments, bond angles, two linear-bend
// components for atoms bent by less than 20° from linear, dihedrals over
// every bond (through linear chains to their ends), and out-of-plane
// coordinates at planar three-coordinate atoms (Primitives). The gradient
// and Hessian are carried into the non-redundant space of the Wilson B
// matrix (its singular value decomposition), and Cartesian coordinates
// for a step are found by the iterative back-transformation of Peng et al.
// (eq. 17 there). The coordinates are rebuilt when an angle approaches
// 180°; when they cannot describe the molecule, or the back-transformation
// fails twice, the relaxation falls back to Cartesian coordinates (the
// Hessian carried over), with rigid translations and rotations projected
// out.
//
// # Steps
//
// The starting Hessian is the model of R. Lindh, A. Bernhardsson,
// G. Karlström, P.-Å. Malmqvist, Chem. Phys. Lett. 241, 423 (1995), its
// force constants placed on the internal coordinates; for bonded pairs its
// distance factor is taken at the sum of the covalent radii (the start is
// often far from the minimum), and out-of-plane coordinates get their own
// constant. It is updated by BFGS with Powell's damping (M. J. D. Powell,
// Lecture Notes in Mathematics 630, 144 (1978)). Steps are rational-function
// steps (A. Banerjee, N. Adams, J. Simons, R. Shepard, J. Phys. Chem. 89,
// 52 (1985)), shortened to the trust radius by a lower level shift as in
// the restricted-step method of J. Besalú, J. M. Bofill, Theor. Chem. Acc.
// 100, 265 (1998). The trust radius starts at 0.5 (bohr and radians),
// doubles (up to 1) when the energy change agrees with the prediction
// (ratio above 0.75) on a step that reached it, halves when the ratio is
// below 0.25; a step that raises the energy by more than 1e-6 Eh is
// rejected, and the next one starts again from the previous geometry with
// a radius a quarter of the rejected step.
//
// # Constraints
//
// Frozen atoms (Options.Freeze) never move. Held bonds, angles and
// dihedrals (Options.Hold) are projected out of the step space and
// restored after every step by Newton iterations on the constraints, so
// they stay at their starting values within 1e-8 bohr or radian.
//
// # Convergence
//
// A geometry is converged when all five criteria hold: the largest and RMS
// component of the Cartesian gradient of the atoms that may move (rigid
// translations and rotations and held coordinates projected out), the
// largest and RMS Cartesian displacement of both the last step and the next
// one (the way to the minimum of the quadratic model, an estimate of the
// remaining error), and the energy change of the last step. The named
// levels (Convergence):
//
//	level    max gradient  RMS gradient  max step   RMS step   energy change
//	         Eh/bohr       Eh/bohr       bohr       bohr       Eh
//	draft    2.5e-3        1.7e-3        1.9e-2     1.3e-2     1e-5
//	report   3.0e-4        2.0e-4        1.9e-3     1.3e-3     1e-6
//	strict   1.0e-5        7.0e-6        4.0e-5     3.0e-5     1e-8
//
// draft is a quick pre-relaxation (bonds within about 0.01 Å, to be
// refined); report (the default) gives a structure to publish: neither the
// last step nor the model's next one moves an atom coordinate by more than
// 0.001 Å; strict is for a frequency
// calculation, where a residual gradient shifts the low modes: the largest
// gradient is 1e-5 Eh/bohr, and on the model surfaces of the tests the
// geometry is within 1e-5 Å of the exact minimum.
package optimize
