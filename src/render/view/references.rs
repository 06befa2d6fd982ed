//! The published works behind the methods a run used, each kept once as
//! structured fields, and written from those fields in two forms: an APA
//! style reference (Publication Manual, 7th ed., ch. 9–10: author, date,
//! title, source; journal and volume in italics) for the report, and a
//! BibTeX entry for `references.bib`.
//!
//! A run cites a work only when it actually used the method: the methods
//! paragraph ([`super::methods`]) asks for a citation through a
//! [`Citations`] collector as it writes each clause, and the references
//! list is exactly what it collected. So a plan with only Welch's *t* test
//! never lists Mann & Whitney, and every listed work is cited in the text.
//!
//! Where the details come from: the guide's reference lists
//! (`docs/guide/background.md`, `docs/guide/methods-rank-robust.md`), each
//! checked there against the article's first page or its journal's record;
//! the code's own doc comments; and, for Student (1908), Shapiro & Wilk
//! (1965), Hodges & Lehmann (1963), Kerby (2014) and Cureton (1956), the
//! articles' first pages or journal records found by searching. An issue
//! number or DOI is given only where one of these showed it. The few
//! entries whose details none of them showed say "from memory" beside them.

use crate::render::markdown::escape;

/// Where a work appeared.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Venue {
    /// A journal article: journal, volume, issue, pages (or an article
    /// number, written as given).
    Article {
        journal: &'static str,
        volume: &'static str,
        issue: Option<&'static str>,
        pages: &'static str,
    },
    /// A book: edition (if not the first) and publisher.
    Book {
        edition: Option<&'static str>,
        publisher: &'static str,
    },
    /// A chapter in an edited book.
    Chapter {
        editors: &'static str,
        book: &'static str,
        pages: &'static str,
        publisher: &'static str,
    },
}

/// One published work.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Source {
    /// The BibTeX key, `<first author><year>`.
    pub key: &'static str,
    /// Authors as "Family, I. I.", in order.
    pub authors: &'static [&'static str],
    /// Year of publication.
    pub year: u16,
    /// Title in sentence case; words in braces keep their capitals in
    /// BibTeX (the braces are dropped in the APA form).
    pub title: &'static str,
    /// Where it appeared.
    pub venue: Venue,
    /// The DOI, without `https://doi.org/`.
    pub doi: Option<&'static str>,
}

/// A journal article; the arguments follow the order of an APA
/// reference, so each entry below reads like one.
#[allow(clippy::too_many_arguments)]
const fn article(
    key: &'static str,
    authors: &'static [&'static str],
    year: u16,
    title: &'static str,
    journal: &'static str,
    volume: &'static str,
    issue: Option<&'static str>,
    pages: &'static str,
    doi: Option<&'static str>,
) -> Source {
    Source {
        key,
        authors,
        year,
        title,
        venue: Venue::Article {
            journal,
            volume,
            issue,
            pages,
        },
        doi,
    }
}

/// Algina, Keselman & Penfield (2005): the robust standardised difference.
pub(crate) const ALGINA_2005: Source = article(
    "algina2005",
    &["Algina, J.", "Keselman, H. J.", "Penfield, R. D."],
    2005,
    "An alternative to {Cohen's} standardized mean difference effect size: A robust parameter and confidence interval in the two independent groups case",
    "Psychological Methods",
    "10",
    Some("3"),
    "317–328",
    None,
);
/// Benjamini & Hochberg (1995): the false discovery rate.
pub(crate) const BENJAMINI_HOCHBERG_1995: Source = article(
    "benjamini1995",
    &["Benjamini, Y.", "Hochberg, Y."],
    1995,
    "Controlling the false discovery rate: A practical and powerful approach to multiple testing",
    "Journal of the Royal Statistical Society: Series B (Methodological)",
    "57",
    None,
    "289–300",
    None,
);
/// Brown & Forsythe (1974): equal spread from deviations about medians.
pub(crate) const BROWN_FORSYTHE_1974: Source = article(
    "brown1974",
    &["Brown, M. B.", "Forsythe, A. B."],
    1974,
    "Robust tests for the equality of variances",
    "Journal of the American Statistical Association",
    "69",
    None,
    "364–367",
    None,
);
/// Brunner & Munzel (2000): the test of the probability of superiority.
pub(crate) const BRUNNER_MUNZEL_2000: Source = article(
    "brunner2000",
    &["Brunner, E.", "Munzel, U."],
    2000,
    "The nonparametric {Behrens–Fisher} problem: Asymptotic theory and a small-sample approximation",
    "Biometrical Journal",
    "42",
    Some("1"),
    "17–25",
    None,
);
/// Cohen (1988): d and its conventions.
pub(crate) const COHEN_1988: Source = Source {
    key: "cohen1988",
    authors: &["Cohen, J."],
    year: 1988,
    title: "Statistical power analysis for the behavioral sciences",
    venue: Venue::Book {
        edition: Some("2nd"),
        publisher: "Lawrence Erlbaum Associates",
    },
    doi: None,
};
/// Dunn (1961): the usual citation for the Bonferroni correction of a
/// family of tests (common practice; volume and pages from memory).
pub(crate) const DUNN_1961: Source = article(
    "dunn1961",
    &["Dunn, O. J."],
    1961,
    "Multiple comparisons among means",
    "Journal of the American Statistical Association",
    "56",
    None,
    "52–64",
    None,
);
/// Cureton (1956): the rank-biserial correlation of two groups (volume
/// and pages as the journal's own reference lists print them).
pub(crate) const CURETON_1956: Source = article(
    "cureton1956",
    &["Cureton, E. E."],
    1956,
    "Rank-biserial correlation",
    "Psychometrika",
    "21",
    None,
    "287–290",
    None,
);
/// Hedges (1981): the small-sample correction of d (volume and pages
/// from memory; the title as `stats::effect` cites it).
pub(crate) const HEDGES_1981: Source = article(
    "hedges1981",
    &["Hedges, L. V."],
    1981,
    "Distribution theory for {Glass's} estimator of effect size and related estimators",
    "Journal of Educational Statistics",
    "6",
    None,
    "107–128",
    None,
);
/// Hochberg (1988): the step-up correction.
pub(crate) const HOCHBERG_1988: Source = article(
    "hochberg1988",
    &["Hochberg, Y."],
    1988,
    "A sharper {Bonferroni} procedure for multiple tests of significance",
    "Biometrika",
    "75",
    None,
    "800–802",
    None,
);
/// Hodges & Lehmann (1963): the shift and pseudo-median estimates.
pub(crate) const HODGES_LEHMANN_1963: Source = article(
    "hodges1963",
    &["Hodges, J. L., Jr.", "Lehmann, E. L."],
    1963,
    "Estimates of location based on rank tests",
    "Annals of Mathematical Statistics",
    "34",
    None,
    "598–611",
    Some("10.1214/aoms/1177704172"),
);
/// Holm (1979): the step-down correction.
pub(crate) const HOLM_1979: Source = article(
    "holm1979",
    &["Holm, S."],
    1979,
    "A simple sequentially rejective multiple test procedure",
    "Scandinavian Journal of Statistics",
    "6",
    None,
    "65–70",
    None,
);
/// Kerby (2014): the matched-pairs rank-biserial correlation.
pub(crate) const KERBY_2014: Source = article(
    "kerby2014",
    &["Kerby, D. S."],
    2014,
    "The simple difference formula: An approach to teaching nonparametric correlation",
    "Comprehensive Psychology",
    "3",
    None,
    "Article 1",
    Some("10.2466/11.IT.3.1"),
);
/// Levene (1960): equal spread from deviations about means.
pub(crate) const LEVENE_1960: Source = Source {
    key: "levene1960",
    authors: &["Levene, H."],
    year: 1960,
    title: "Robust tests for equality of variances",
    venue: Venue::Chapter {
        editors: "I. Olkin, S. G. Ghurye, W. Hoeffding, W. G. Madow, & H. B. Mann",
        book: "Contributions to probability and statistics: Essays in honor of {Harold Hotelling}",
        pages: "278–292",
        publisher: "Stanford University Press",
    },
    doi: None,
};
/// Mann & Whitney (1947): the U test.
pub(crate) const MANN_WHITNEY_1947: Source = article(
    "mann1947",
    &["Mann, H. B.", "Whitney, D. R."],
    1947,
    "On a test of whether one of two random variables is stochastically larger than the other",
    "Annals of Mathematical Statistics",
    "18",
    None,
    "50–60",
    None,
);
/// Munzel & Hauschke (2003): equivalence on the probability of superiority.
pub(crate) const MUNZEL_HAUSCHKE_2003: Source = article(
    "munzel2003",
    &["Munzel, U.", "Hauschke, D."],
    2003,
    "A nonparametric test for proving noninferiority in clinical trials with ordered categorical data",
    "Biometrical Journal",
    "45",
    Some("8"),
    "1039–1052",
    None,
);
/// Neubert & Brunner (2007): the studentised permutation p.
pub(crate) const NEUBERT_BRUNNER_2007: Source = article(
    "neubert2007",
    &["Neubert, K.", "Brunner, E."],
    2007,
    "A studentized permutation test for the non-parametric {Behrens–Fisher} problem",
    "Computational Statistics & Data Analysis",
    "51",
    Some("10"),
    "5192–5204",
    None,
);
/// Phipson & Smyth (2010): p from randomly drawn permutations.
pub(crate) const PHIPSON_SMYTH_2010: Source = article(
    "phipson2010",
    &["Phipson, B.", "Smyth, G. K."],
    2010,
    "Permutation p-values should never be zero: Calculating exact p-values when permutations are randomly drawn",
    "Statistical Applications in Genetics and Molecular Biology",
    "9",
    Some("1"),
    "Article 39",
    None,
);
/// Pratt (1959): zero differences kept in the ranking. (Issue number
/// from memory: the guide's list gives volume and pages only.)
pub(crate) const PRATT_1959: Source = article(
    "pratt1959",
    &["Pratt, J. W."],
    1959,
    "Remarks on zeros and ties in the {Wilcoxon} signed rank procedures",
    "Journal of the American Statistical Association",
    "54",
    None,
    "655–667",
    None,
);
/// Royston (1995): the algorithm behind the Shapiro–Wilk W and its p.
pub(crate) const ROYSTON_1995: Source = article(
    "royston1995",
    &["Royston, P."],
    1995,
    "Remark {AS R94}: A remark on {Algorithm AS 181}: The {W}-test for normality",
    "Applied Statistics",
    "44",
    Some("4"),
    "547–551",
    None,
);
/// Satterthwaite (1946): the degrees of freedom of Welch's test (volume
/// and pages from memory: searching found no record to confirm them).
pub(crate) const SATTERTHWAITE_1946: Source = article(
    "satterthwaite1946",
    &["Satterthwaite, F. E."],
    1946,
    "An approximate distribution of estimates of variance components",
    "Biometrics Bulletin",
    "2",
    None,
    "110–114",
    None,
);
/// Schuirmann (1987): two one-sided tests.
pub(crate) const SCHUIRMANN_1987: Source = article(
    "schuirmann1987",
    &["Schuirmann, D. J."],
    1987,
    "A comparison of the two one-sided tests procedure and the power approach for assessing the equivalence of average bioavailability",
    "Journal of Pharmacokinetics and Biopharmaceutics",
    "15",
    Some("6"),
    "657–680",
    Some("10.1007/BF01068419"),
);
/// Shapiro & Wilk (1965): the W test of normality.
pub(crate) const SHAPIRO_WILK_1965: Source = article(
    "shapiro1965",
    &["Shapiro, S. S.", "Wilk, M. B."],
    1965,
    "An analysis of variance test for normality (complete samples)",
    "Biometrika",
    "52",
    Some("3–4"),
    "591–611",
    None,
);
/// Steiger & Fouladi (1997): intervals by inverting the noncentral t
/// (editors and pages from memory).
pub(crate) const STEIGER_FOULADI_1997: Source = Source {
    key: "steiger1997",
    authors: &["Steiger, J. H.", "Fouladi, R. T."],
    year: 1997,
    title: "Noncentrality interval estimation and the evaluation of statistical models",
    venue: Venue::Chapter {
        editors: "L. L. Harlow, S. A. Mulaik, & J. H. Steiger",
        book: "What if there were no significance tests?",
        pages: "221–257",
        publisher: "Lawrence Erlbaum Associates",
    },
    doi: None,
};
/// Streitberg & Röhmel (1986): exact distributions given the ties. (Title
/// and issue from memory, as the guide's list marks them.)
pub(crate) const STREITBERG_ROHMEL_1986: Source = article(
    "streitberg1986",
    &["Streitberg, B.", "Röhmel, J."],
    1986,
    "Exact distributions for permutation and rank tests: An introduction to some recently published algorithms",
    "Statistical Software Newsletter",
    "12",
    Some("1"),
    "10–17",
    None,
);
/// Student (1908): the t test.
pub(crate) const STUDENT_1908: Source = article(
    "student1908",
    &["Student"],
    1908,
    "The probable error of a mean",
    "Biometrika",
    "6",
    Some("1"),
    "1–25",
    None,
);
/// Tukey & McLaughlin (1963): the trimmed t of one sample.
pub(crate) const TUKEY_MCLAUGHLIN_1963: Source = article(
    "tukey1963",
    &["Tukey, J. W.", "McLaughlin, D. H."],
    1963,
    "Less vulnerable confidence and significance procedures for location based on a single sample: {Trimming/Winsorization} 1",
    "Sankhyā: The Indian Journal of Statistics, Series A",
    "25",
    Some("3"),
    "331–352",
    None,
);
/// Welch (1947): the unequal-variance t test.
pub(crate) const WELCH_1947: Source = article(
    "welch1947",
    &["Welch, B. L."],
    1947,
    "The generalization of \"{Student's}\" problem when several different population variances are involved",
    "Biometrika",
    "34",
    Some("1–2"),
    "28–35",
    None,
);
/// Wilcoxon (1945): the signed-rank test.
pub(crate) const WILCOXON_1945: Source = article(
    "wilcoxon1945",
    &["Wilcoxon, F."],
    1945,
    "Individual comparisons by ranking methods",
    "Biometrics Bulletin",
    "1",
    None,
    "80–83",
    None,
);
/// Yuen (1974): the two-sample trimmed t.
pub(crate) const YUEN_1974: Source = article(
    "yuen1974",
    &["Yuen, K. K."],
    1974,
    "The two-sample trimmed t for unequal population variances",
    "Biometrika",
    "61",
    Some("1"),
    "165–170",
    None,
);

impl Source {
    /// The family names of the authors.
    fn families(&self) -> Vec<&'static str> {
        self.authors
            .iter()
            .map(|a| a.split(',').next().unwrap_or(a).trim())
            .collect()
    }

    /// The in-text citation inside parentheses, APA style (§8.17): one or
    /// two family names joined by "&", three or more as the first and
    /// "et al.", then the year: `Brunner & Munzel, 2000`.
    pub(crate) fn cite(&self) -> String {
        format!("{}, {}", self.names("&"), self.year)
    }

    /// The author part of a citation, two authors joined by `and`.
    fn names(&self, and: &str) -> String {
        let f = self.families();
        match f.as_slice() {
            [one] => (*one).to_string(),
            [a, b] => format!("{a} {and} {b}"),
            [a, ..] => format!("{a} et al."),
            [] => String::new(),
        }
    }

    /// The reference-list entry, as Markdown.
    pub(crate) fn apa(&self) -> String {
        let authors = match self.authors {
            [one] => escape(one),
            [init @ .., last] => format!(
                "{}, & {}",
                init.iter()
                    .map(|a| escape(a))
                    .collect::<Vec<_>>()
                    .join(", "),
                escape(last)
            ),
            [] => String::new(),
        };
        let title = escape(&plain(self.title));
        // The author element ends with a full stop (APA §9.8): after
        // initials it is already there; a single name, as a pseudonym,
        // takes one.
        let stop = if authors.ends_with('.') { "" } else { "." };
        let mut s = format!("{authors}{stop} ({}). ", self.year);
        match self.venue {
            Venue::Article {
                journal,
                volume,
                issue,
                pages,
            } => {
                s.push_str(&format!("{title}. *{}, {volume}*", escape(journal)));
                if let Some(i) = issue {
                    s.push_str(&format!("({i})"));
                }
                s.push_str(&format!(", {pages}."));
            }
            Venue::Book { edition, publisher } => {
                s.push_str(&format!("*{title}*"));
                if let Some(e) = edition {
                    s.push_str(&format!(" ({e} ed.)"));
                }
                s.push_str(&format!(". {}.", escape(publisher)));
            }
            Venue::Chapter {
                editors,
                book,
                pages,
                publisher,
            } => s.push_str(&format!(
                "{title}. In {} (Eds.), *{}* (pp. {pages}). {}.",
                escape(editors),
                escape(&plain(book)),
                escape(publisher)
            )),
        }
        if let Some(doi) = self.doi {
            s.push_str(&format!(" https://doi.org/{doi}"));
        }
        s
    }

    /// The BibTeX entry.
    pub(crate) fn bibtex(&self) -> String {
        let field = |name: &str, value: &str| format!("  {name:<9} = {{{}}},\n", bib(value));
        let authors = self
            .authors
            .iter()
            .map(|a| {
                if a.contains(',') {
                    a.to_string()
                } else {
                    // A pseudonym stays one name.
                    format!("{{{a}}}")
                }
            })
            .collect::<Vec<_>>()
            .join(" and ");
        let (kind, rest) = match self.venue {
            Venue::Article {
                journal,
                volume,
                issue,
                pages,
            } => {
                let mut r = field("journal", journal) + &field("volume", volume);
                if let Some(i) = issue {
                    r += &field("number", i);
                }
                r += &match pages.strip_prefix("Article ") {
                    Some(n) => field("eid", n),
                    None => field("pages", pages),
                };
                ("article", r)
            }
            Venue::Book { edition, publisher } => {
                let mut r = String::new();
                if let Some(e) = edition {
                    r += &field("edition", e);
                }
                ("book", r + &field("publisher", publisher))
            }
            Venue::Chapter {
                editors,
                book,
                pages,
                publisher,
            } => (
                "incollection",
                field("editor", &bib_names(editors))
                    + &field("booktitle", book)
                    + &field("pages", pages)
                    + &field("publisher", publisher),
            ),
        };
        let mut s = format!("@{kind}{{{},\n", self.key);
        s += &format!("  {:<9} = {{{}}},\n", "author", bib(&authors));
        s += &field("year", &self.year.to_string());
        s += &field("title", self.title);
        s += &rest;
        if let Some(doi) = self.doi {
            s += &field("doi", doi);
        }
        s.push_str("}\n");
        s
    }
}

/// The title without the BibTeX braces that protect capitals.
fn plain(title: &str) -> String {
    title.replace(['{', '}'], "")
}

/// Editors as BibTeX wants them: "A. B. Name and C. Name".
fn bib_names(editors: &str) -> String {
    editors
        .split(", ")
        .map(|e| e.trim_start_matches("& "))
        .collect::<Vec<_>>()
        .join(" and ")
}

/// Text for a BibTeX field: ASCII LaTeX for the few non-ASCII letters and
/// dashes our entries use, `\&` for an ampersand, and TeX quotes.
fn bib(text: &str) -> String {
    let mut out = String::new();
    let mut open = true;
    for c in text.chars() {
        match c {
            '–' => out.push_str("--"),
            'ö' => out.push_str("{\\\"o}"),
            'ā' => out.push_str("{\\=a}"),
            '&' => out.push_str("\\&"),
            '"' => {
                out.push_str(if open { "``" } else { "''" });
                open = !open;
            }
            _ => out.push(c),
        }
    }
    out
}

/// The works a run cites, collected while its methods are written.
#[derive(Default)]
pub(crate) struct Citations {
    cited: Vec<Source>,
}

impl Citations {
    /// Records a citation of every source and returns the parenthetical
    /// citation text, `Shapiro & Wilk, 1965; Royston, 1995`.
    pub(crate) fn cite(&mut self, sources: &[Source]) -> String {
        for s in sources {
            if !self.cited.iter().any(|c| c.key == s.key) {
                self.cited.push(*s);
            }
        }
        sources
            .iter()
            .map(Source::cite)
            .collect::<Vec<_>>()
            .join("; ")
    }

    /// Records a citation and returns the narrative form, `Welch (1947)`.
    pub(crate) fn narrative(&mut self, source: Source) -> String {
        self.cite(&[source]);
        format!("{} ({})", source.names("and"), source.year)
    }

    /// The works cited, in the order of the reference list: alphabetical
    /// by the authors' names, then by year (APA §9.44).
    pub(crate) fn list(mut self) -> Vec<Source> {
        self.cited.sort_by(|a, b| {
            let key = |s: &Source| s.authors.join(" ").to_lowercase();
            key(a).cmp(&key(b)).then(a.year.cmp(&b.year))
        });
        self.cited
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn citations_follow_the_apa_author_rules() {
        assert_eq!(WELCH_1947.cite(), "Welch, 1947");
        assert_eq!(BRUNNER_MUNZEL_2000.cite(), "Brunner & Munzel, 2000");
        assert_eq!(ALGINA_2005.cite(), "Algina et al., 2005");
        let mut c = Citations::default();
        assert_eq!(c.narrative(YUEN_1974), "Yuen (1974)");
        assert_eq!(c.narrative(MANN_WHITNEY_1947), "Mann and Whitney (1947)");
    }

    #[test]
    fn an_article_reads_as_apa_sets_it() {
        // APA 7 §10.1, the journal-article pattern: Author, A. A. (Year).
        // Title. *Journal, volume*(issue), pages. https://doi.org/…
        assert_eq!(
            SCHUIRMANN_1987.apa(),
            "Schuirmann, D. J. (1987). A comparison of the two one-sided tests procedure and the power approach for assessing the equivalence of average bioavailability. *Journal of Pharmacokinetics and Biopharmaceutics, 15*(6), 657–680. https://doi.org/10.1007/BF01068419"
        );
        assert_eq!(
            ALGINA_2005.apa().split(" (2005)").next(),
            Some("Algina, J., Keselman, H. J., & Penfield, R. D.")
        );
        assert!(COHEN_1988
            .apa()
            .contains("*Statistical power analysis for the behavioral sciences* (2nd ed.). Lawrence Erlbaum Associates."));
        assert!(LEVENE_1960.apa().contains(
            "In I. Olkin, S. G. Ghurye, W. Hoeffding, W. G. Madow, \\& H. B. Mann (Eds.), *Contributions to probability and statistics: Essays in honor of Harold Hotelling* (pp. 278–292)."
        ));
    }

    #[test]
    fn bibtex_entries_are_ascii_and_balanced() {
        for s in [
            STREITBERG_ROHMEL_1986,
            TUKEY_MCLAUGHLIN_1963,
            WELCH_1947,
            LEVENE_1960,
            STUDENT_1908,
            PHIPSON_SMYTH_2010,
        ] {
            let b = s.bibtex();
            assert!(b.is_ascii(), "{b}");
            let depth = b.chars().fold(0i32, |d, c| match c {
                '{' => d + 1,
                '}' => d - 1,
                _ => d,
            });
            assert_eq!(depth, 0, "{b}");
            assert!(b.starts_with('@') && b.contains(s.key), "{b}");
        }
        assert!(STREITBERG_ROHMEL_1986.bibtex().contains("R{\\\"o}hmel, J."));
        assert!(WELCH_1947
            .bibtex()
            .contains("The generalization of ``{Student's}'' problem"));
        assert!(STUDENT_1908.bibtex().contains("author    = {{Student}}"));
        assert!(PHIPSON_SMYTH_2010.bibtex().contains("eid       = {39}"));
        assert!(LEVENE_1960
            .bibtex()
            .contains("editor    = {I. Olkin and S. G. Ghurye and W. Hoeffding and W. G. Madow and H. B. Mann}"));
    }

    #[test]
    fn the_list_is_alphabetical_and_has_no_repeats() {
        let mut c = Citations::default();
        c.cite(&[WELCH_1947, SATTERTHWAITE_1946]);
        c.cite(&[BROWN_FORSYTHE_1974, WELCH_1947]);
        let keys: Vec<_> = c.list().iter().map(|s| s.key).collect();
        assert_eq!(keys, ["brown1974", "satterthwaite1946", "welch1947"]);
    }
}
