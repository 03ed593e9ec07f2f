//! Piezoresistance: Smith's room-temperature coefficients and Kanda's
//! piezoresistance factor P(N, T).
//! SKELETON: helper "transport" owns this file.
