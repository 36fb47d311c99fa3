//! The vocabulary every stage shares: calendar years and offsets ([`year`]), exact money
//! ([`money`]) and identifiers ([`ids`]). Small types that carry their meaning, so that a
//! function's signature says which kind of year or amount it takes.

pub mod ids;
pub mod money;
pub mod year;

pub use ids::SectionId;
pub use money::Money;
pub use year::{Year, YearOffset};
