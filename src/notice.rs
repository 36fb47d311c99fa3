//! Notes the library has for whoever runs it while it works — another run holds the output
//! directory's lock, or its file system has no locks — handed to the sink the caller sets, and
//! dropped when none is set. The library itself writes nothing to the terminal; the command line
//! sets a sink that writes to stderr unless `--quiet`.

use std::sync::RwLock;

static SINK: RwLock<Option<fn(&str)>> = RwLock::new(None);

/// Where notes go from now on (`None`: nowhere).
pub fn set_sink(sink: Option<fn(&str)>) {
    *SINK.write().unwrap_or_else(|p| p.into_inner()) = sink;
}

/// Hand `text` (one line, no line end) to the sink, if any.
pub fn say(text: &str) {
    let sink = *SINK.read().unwrap_or_else(|p| p.into_inner());
    if let Some(f) = sink {
        f(text);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Mutex;

    static SEEN: Mutex<Vec<String>> = Mutex::new(Vec::new());

    fn record(text: &str) {
        SEEN.lock().unwrap().push(text.to_owned());
    }

    #[test]
    fn notes_reach_the_sink_set_and_nowhere_without_one() {
        set_sink(Some(record));
        say("first");
        set_sink(None);
        say("dropped");
        set_sink(Some(record));
        say("second");
        set_sink(None);
        let seen = SEEN.lock().unwrap().clone();
        assert_eq!(seen, ["first", "second"]);
    }
}
