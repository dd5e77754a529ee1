//! What produced a result: the `run` object every JSON and YAML document
//! carries (foothold's version, the command line as given, and the seed and
//! number of starts of the multistart search when it ran), and the line the
//! HTML pages show at their foot.

use crate::search::SearchOptions;
use serde::Serialize;

/// The run that produced a document, recorded so that it can be repeated.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Run {
    /// foothold's version.
    pub version: String,
    /// The command line as given, without the program name (argv[1..]).
    pub arguments: Vec<String>,
    /// Seed of the multistart search; `None` when no search ran (starts given, or `infer`).
    pub seed: Option<u64>,
    /// Candidate starts the search was given; `None` when no search ran.
    pub starts: Option<usize>,
}

impl Run {
    /// The run of this command line (`argv[1..]`), before any search.
    pub fn new(arguments: Vec<String>) -> Run {
        Run {
            version: env!("CARGO_PKG_VERSION").to_string(),
            arguments,
            seed: None,
            starts: None,
        }
    }

    /// The same run with the seed and budget of the search it ran.
    pub fn searched(&self, opts: &SearchOptions) -> Run {
        Run {
            seed: Some(opts.seed),
            starts: Some(opts.starts),
            ..self.clone()
        }
    }

    /// The run in one line for a page's foot: version, command line, seed and starts.
    pub fn line(&self) -> String {
        let mut s = format!(
            "foothold {} run as: foothold {}",
            self.version,
            self.arguments
                .iter()
                .map(|a| shell_word(a))
                .collect::<Vec<_>>()
                .join(" ")
        );
        if let (Some(seed), Some(starts)) = (self.seed, self.starts) {
            s += &format!(" (search: seed {seed}, {starts} starts)");
        }
        s
    }

    /// Adds the run line at the foot of a rendered page, just before `</main>`
    /// (the page is returned unchanged when it has no `</main>`).
    pub fn add_to_page(&self, page: String) -> String {
        let Some(at) = page.rfind("</main>") else {
            return page;
        };
        let foot = format!(
            "<footer class=\"meta\"><p>{}</p></footer>\n",
            crate::report::html::escape_html(&self.line())
        );
        let mut out = String::with_capacity(page.len() + foot.len());
        out.push_str(&page[..at]);
        out.push_str(&foot);
        out.push_str(&page[at..]);
        out
    }
}

/// An argument as a reader would type it: quoted with `'...'` when it holds
/// anything but letters, digits and `-_./=,:+@%`.
fn shell_word(a: &str) -> String {
    let plain = !a.is_empty()
        && a.chars()
            .all(|c| c.is_alphanumeric() || "-_./=,:+@%".contains(c));
    if plain {
        a.to_string()
    } else {
        format!("'{}'", a.replace('\'', r"'\''"))
    }
}

/// A document with the run appended as its last field, `run`.
#[derive(Serialize)]
pub struct WithRun<'a, T: Serialize> {
    /// The document's own fields, in their order.
    #[serde(flatten)]
    pub doc: T,
    /// The run that produced it.
    pub run: &'a Run,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_run_is_the_last_field_and_reads_back() {
        #[derive(Serialize)]
        struct Doc {
            model: &'static str,
            n: usize,
        }
        let run = Run::new(vec!["fit".into(), "d.csv".into(), "--model".into(), "a*x".into()])
            .searched(&SearchOptions {
                seed: 7,
                starts: 16,
                ..SearchOptions::default()
            });
        let text = serde_json::to_string(&WithRun {
            doc: Doc { model: "a*x", n: 3 },
            run: &run,
        })
        .unwrap();
        assert!(text.starts_with("{\"model\":\"a*x\",\"n\":3,\"run\":{"), "{text}");
        let v: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(v["run"]["arguments"][3], "a*x");
        assert_eq!(v["run"]["seed"], 7);
        assert_eq!(v["run"]["starts"], 16);
        assert_eq!(v["run"]["version"], env!("CARGO_PKG_VERSION"));
        assert_eq!(
            run.line(),
            format!(
                "foothold {} run as: foothold fit d.csv --model 'a*x' (search: seed 7, 16 starts)",
                env!("CARGO_PKG_VERSION")
            )
        );
        let page = run.add_to_page("<main>\n<p>x</p>\n</main>\n</body>".into());
        assert!(page.contains("<footer class=\"meta\"><p>foothold "), "{page}");
        assert!(page.contains("--model &#39;a*x&#39;"), "{page}");
        assert!(page.ends_with("</footer>\n</main>\n</body>"), "{page}");
    }
}
