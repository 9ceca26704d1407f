// Package pointgroup finds the point group of a molecule, its rotational
// symmetry number, and makes a nearly symmetric geometry exactly symmetric.
//
// # Detection
//
// Atoms are interchangeable only if their labels and masses agree. The
// geometry is moved to its center of mass, and a symmetry operation is
// accepted when it maps every atom to within a distance tolerance of a
// distinct atom of the same kind (default [DefaultToleranceBohr], 0.01 Å).
//
// Candidate symmetry elements are generated so that none can be missed:
//
//   - every C2 axis passes through an atom, or through the midpoint
//     of two interchanged atoms of the same kind, or, when every atom lies
//     in the plane perpendicular to it, is the normal of that plane and so a
//     principal axis of inertia;
//   - an axis Cn with n ≥ 3 is, outside the cubic and icosahedral groups, a
//     principal axis of inertia (it makes two principal moments equal); in
//     the cubic and icosahedral groups it passes through an atom or is the
//     normal of the plane of three atoms of one orbit (the orbit of an atom
//     off a Cn axis is a regular n-gon about it; the triples through the
//     first atom of each shell suffice), searched when the three moments are
//     nearly equal;
//   - a mirror plane either contains all atoms (then its normal is a
//     principal axis) or has the difference of two interchanged atoms as
//     its normal.
//
// Only atoms of the same kind at the same distance from the center of mass
// are paired, which keeps the search short for unsymmetric molecules. The
// order of each axis found is the largest n for which Cn maps the molecule
// onto itself; n is bounded by the number of atoms of one kind on the ring
// of an off-axis atom.
//
// The group then follows the usual decision tree (F. A. Cotton, Chemical
// Applications of Group Theory, 3rd ed., Wiley 1990, §3.14; P. R. Bunker,
// P. Jensen, Molecular Symmetry and Spectroscopy, 2nd ed., NRC Research
// Press 1998): linear molecules are D∞h or C∞v; two or more axes of order ≥ 3
// give the cubic and icosahedral groups (C5: I/Ih, C4: O/Oh, otherwise
// T/Td/Th by inversion and mirrors); no axis gives Cs, Ci or C1; otherwise
// the main axis Cn with n perpendicular C2 axes gives Dnh, Dnd or Dn, and
// without them Cnh, Cnv, S2n or Cn. Among several C2 axes of equal order
// (the D2 family) the main axis is one that is also an S4 axis, if any,
// so that D2d is recognized.
//
// # Symmetry number
//
// The rotational symmetry number σ is the number of proper rotations in the
// group (G. Herzberg, Molecular Spectra and Molecular Structure II: Infrared
// and Raman Spectra of Polyatomic Molecules, Van Nostrand 1945, p. 508;
// D. A. McQuarrie, Statistical Mechanics, Harper & Row 1976, §8-3): 1 for
// C1, Ci, Cs and C∞v; n for Cn, Cnv, Cnh and S2n; 2n for Dn, Dnh, Dnd;
// 2 for D∞h; 12 for T, Td, Th; 24 for O, Oh; 60 for I, Ih. A free atom
// (group Kh) has σ = 1.
//
// # Symmetrization
//
// [Symmetrize] builds the ideal group in a frame fixed by the elements
// found (main axis and a perpendicular C2 or mirror normal, made exactly
// orthogonal; for the cubic and icosahedral groups two perpendicular C2 or C4
// axes), generates all its operations R (closure under multiplication), finds
// for each the atom permutation π_R, and replaces every position by the group
// average x_i' = (1/|G|) Σ_R R⁻¹ x_{π_R(i)}. The ideal group is then turned
// by the rotation that best superposes the average onto the input (mass-
// weighted least squares with the quaternion method of B. K. P. Horn,
// J. Opt. Soc. Am. A 4, 629 (1987)) and the average taken again, a few
// rounds, so that the frame does not rest on one atom's position. The result
// is invariant under the whole ideal group to rounding error. Linear molecules are projected onto
// their axis (and averaged with the inversion images for D∞h).
package pointgroup
