//! PLACEHOLDER written by the lead so the crate compiles; the data helper replaces this file.
use super::records::IonRecord;
pub(crate) const IONS: &[IonRecord] = &[
    IonRecord { name: "sodium", synonyms: &["na+"], formula: "Na+", charge: 1, ion_size_angstrom: Some(4.5), source: "placeholder", from_memory: true },
    IonRecord { name: "chloride", synonyms: &["cl-"], formula: "Cl-", charge: -1, ion_size_angstrom: Some(3.0), source: "placeholder", from_memory: true },
    IonRecord { name: "copper(ii)", synonyms: &["cu2+"], formula: "Cu+2", charge: 2, ion_size_angstrom: Some(6.0), source: "placeholder", from_memory: true },
    IonRecord { name: "calcium", synonyms: &["ca2+"], formula: "Ca+2", charge: 2, ion_size_angstrom: Some(6.0), source: "placeholder", from_memory: true },
];
