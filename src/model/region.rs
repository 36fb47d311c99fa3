//! Regions: the network's `region` column and the `region` key of budget lines and condition
//! targets.

use std::collections::HashSet;
use std::fmt;
use std::ops::Deref;
use std::sync::Arc;

/// A region's name as the files spell it. Each name is held once per file that names it (the
/// network's reader shares one for every section of a region, see [`Interner`]); two regions are
/// the same when their names are.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Region(Arc<str>);

impl Region {
    /// A region of this name (not shared with any other).
    pub fn new(name: &str) -> Region {
        Region(Arc::from(name))
    }

    /// The name as written.
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

impl Deref for Region {
    type Target = str;
    fn deref(&self) -> &str {
        &self.0
    }
}

impl fmt::Display for Region {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

/// The regions a reader has met, so that every row of one region shares its name.
#[derive(Debug, Default)]
pub struct Interner {
    seen: HashSet<Region>,
}

impl Interner {
    /// The region named `name`, shared with every earlier call for the same name.
    pub fn get(&mut self, name: &str) -> Region {
        if let Some(r) = self.seen.get(name) {
            return r.clone();
        }
        let r = Region::new(name);
        self.seen.insert(r.clone());
        r
    }
}

impl std::borrow::Borrow<str> for Region {
    fn borrow(&self) -> &str {
        &self.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rows of one region share one name; names compare by their text, shared or not.
    #[test]
    fn one_name_per_region() {
        let mut i = Interner::default();
        let (a, b, c) = (i.get("north"), i.get("south"), i.get("north"));
        assert!(Arc::ptr_eq(&a.0, &c.0));
        assert_ne!(a, b);
        assert_eq!(a, Region::new("north"));
        assert_eq!(a.as_str(), "north");
        assert_eq!(format!("{b}"), "south");
    }
}
