//! Conductivity, resistivity and the two-carrier Hall coefficient with a Hall
//! scattering factor.
//! SKELETON: helper "transport" owns this file.
