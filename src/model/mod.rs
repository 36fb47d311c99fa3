//! The vocabulary every stage shares: calendar years and offsets ([`year`]), exact money
//! ([`money`]), identifiers ([`ids`]), regions ([`region`]), the road network ([`network`]) and the treatment catalogue
//! ([`catalogue`]) as read and checked by [`crate::input`]. Small types that carry their meaning, so that a
//! function's signature says which kind of year or amount it takes.

pub mod catalogue;
pub mod ids;
pub mod money;
pub mod network;
pub mod region;
pub mod year;

pub use ids::SectionId;
pub use money::Money;
pub use region::Region;
pub use year::{Year, YearOffset};
