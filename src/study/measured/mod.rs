//! Measured data: switching events in waveform recordings and what they measure of the
//! network (source strength, X/R, harmonic impedance, ringing), and IEEE 519-2014's
//! statistical evaluation of a harmonic log. Physics on sampled values only; the readers
//! are in [`crate::io::recordings`].

pub mod compliance;
pub mod events;
pub mod signals;

/// Serializes a complex number as `[re, im]`.
pub fn ser_complex<S: serde::Serializer>(
    z: &num_complex::Complex64,
    s: S,
) -> Result<S::Ok, S::Error> {
    use serde::ser::SerializeTuple;
    let mut t = s.serialize_tuple(2)?;
    t.serialize_element(&z.re)?;
    t.serialize_element(&z.im)?;
    t.end()
}
