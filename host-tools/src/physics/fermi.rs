//! Fermi-Dirac integral F_1/2 and its inverse.
//! SKELETON: helper "carriers" owns this file.
