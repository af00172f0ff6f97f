//! Modified nodal analysis matrix assembly shared by the real (DC) and
//! complex (AC, noise) analyses (Ho, Ruehli, Brennan 1975).
