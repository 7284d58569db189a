// Package measure computes published measures of how mixed or separated
// groups of people are, from a table counts[area][group] of people (float64,
// as survey estimates may be fractional). It knows nothing of geometry: an
// area is a row, a group a column.
//
// Notation, after Reardon & Firebaugh: areas j, groups m, t_jm people in area
// j of group m, t_j = Σ_m t_jm, T = Σ_j t_j, π_m = Σ_j t_jm / T the group's
// share of the extent, π_jm = t_jm / t_j its share of area j.
//
// Per area (Areas):
//   - shares π_jm, the largest group and its share;
//   - entropy diversity E_j = Σ_m π_jm ln(1/π_jm), and E_j / ln k, its
//     normalised form in [0, 1] for k groups (Theil 1972, "Statistical
//     Decomposition Analysis"; Reardon & Firebaugh 2002).
//
// Per extent, a set of areas (Measure):
//   - Theil's information (multigroup entropy) index
//     H = Σ_j t_j (E − E_j) / (T·E), where E is the entropy of the extent's
//     shares π_m (Theil & Finizza 1971, J. Mathematical Sociology 1:187–193;
//     multigroup form in Reardon & Firebaugh 2002, "Measures of multigroup
//     segregation", Sociological Methodology 32:33–67);
//   - the mutual information index M = Σ_j (t_j/T) Σ_m π_jm ln(π_jm / π_m)
//     (Reardon & Firebaugh 2002), with M = H·E;
//   - the dissimilarity index of each pair of groups a, b:
//     D = ½ Σ_j |t_ja/T_a − t_jb/T_b| (Duncan & Duncan 1955, American
//     Sociological Review 20:210–217);
//   - exposure of x to y, xPy = Σ_j (t_jx/T_x)(t_jy/t_j), and isolation xPx
//     (Massey & Denton 1988, "The Dimensions of Residential Segregation",
//     Social Forces 67:281–315).
//
// Massey & Denton name five dimensions of segregation: evenness, exposure,
// concentration, centralization and clustering. This package measures two of
// them, evenness (H, M, D) and exposure (xPy, xPx). The other three need the
// areas' sizes, positions or neighbours and are not measured here.
//
// Decompose splits H and M of a set of extents (the metros of a nation) into
// a between-extent part and a within-extent part:
//
//	M_total = M_between + Σ_e (T_e/T) M_e
//
// exactly (the chain rule of mutual information; Reardon & Firebaugh 2002
// give the decomposition of M). Since M = H·E, and the extents-as-areas
// table has the same group totals and so the same E as the whole:
//
//	H_total·E_total = H_between·E_total + Σ_e (T_e/T) E_e H_e
//
// that is, H_total = H_between + Σ_e (T_e E_e)/(T E_total) H_e.
//
// Simulate gives each extent measure an interval from repeated draws of the
// counts, for survey tables that publish a margin of error per cell.
//
// Undefined values are NaN: H when the extent holds one group only (E = 0),
// D of a pair with an empty group, exposure of an empty group; every measure
// of an extent without people.
package measure
