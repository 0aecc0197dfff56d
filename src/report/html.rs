//! One self-contained HTML file per run: every picture is embedded (PNG as a data URI, SVG
//! inline), the style sheet is inline, and nothing is loaded from anywhere else.

use std::fmt::Write as _;

use super::markup::escape;

/// A piece of a report section.
#[derive(Debug, Clone)]
pub enum Block {
    Paragraph(String),
    /// Header row and body rows; cells are plain text.
    Table {
        headers: Vec<String>,
        rows: Vec<Vec<String>>,
    },
    /// A PNG picture with its caption.
    Png {
        bytes: Vec<u8>,
        caption: String,
    },
    /// An SVG document (from `report::plots`) with its caption.
    Svg {
        svg: String,
        caption: String,
    },
    /// A caution that applies to results shown (drawn in a highlighted box).
    Caution(String),
    /// Preformatted text (the plan, provenance lines).
    Preformatted(String),
}

/// A titled section.
#[derive(Debug, Clone)]
pub struct Section {
    pub heading: String,
    pub blocks: Vec<Block>,
}

impl Section {
    pub fn paragraph(&mut self, text: impl Into<String>) -> &mut Self {
        self.blocks.push(Block::Paragraph(text.into()));
        self
    }
    pub fn table(&mut self, headers: &[&str], rows: Vec<Vec<String>>) -> &mut Self {
        let headers = headers.iter().map(|h| h.to_string()).collect();
        self.blocks.push(Block::Table { headers, rows });
        self
    }
    pub fn png(&mut self, bytes: Vec<u8>, caption: impl Into<String>) -> &mut Self {
        self.blocks.push(Block::Png {
            bytes,
            caption: caption.into(),
        });
        self
    }
    pub fn svg(&mut self, svg: String, caption: impl Into<String>) -> &mut Self {
        self.blocks.push(Block::Svg {
            svg,
            caption: caption.into(),
        });
        self
    }
    pub fn caution(&mut self, text: impl Into<String>) -> &mut Self {
        self.blocks.push(Block::Caution(text.into()));
        self
    }
    pub fn preformatted(&mut self, text: impl Into<String>) -> &mut Self {
        self.blocks.push(Block::Preformatted(text.into()));
        self
    }
}

/// The report builder.
#[derive(Debug, Clone, Default)]
pub struct Report {
    pub title: String,
    pub subtitle: String,
    pub sections: Vec<Section>,
}

impl Report {
    pub fn new(title: impl Into<String>, subtitle: impl Into<String>) -> Report {
        Report {
            title: title.into(),
            subtitle: subtitle.into(),
            sections: Vec::new(),
        }
    }

    /// Appends a section and returns it for filling.
    pub fn section(&mut self, heading: impl Into<String>) -> &mut Section {
        self.sections.push(Section {
            heading: heading.into(),
            blocks: Vec::new(),
        });
        self.sections.last_mut().expect("just pushed")
    }

    /// The whole document.
    pub fn to_html(&self) -> String {
        let mut h = String::with_capacity(1 << 16);
        let _ = write!(
            h,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<header><h1>{}</h1><p class=\"sub\">{}</p></header>\n",
            escape(&self.title),
            escape(&self.title),
            escape(&self.subtitle)
        );
        h.push_str("<nav><ol>\n");
        for (i, s) in self.sections.iter().enumerate() {
            let _ = writeln!(h, "<li><a href=\"#s{i}\">{}</a></li>", escape(&s.heading));
        }
        h.push_str("</ol></nav>\n<main>\n");
        for (i, s) in self.sections.iter().enumerate() {
            let _ = writeln!(h, "<section id=\"s{i}\">\n<h2>{}</h2>", escape(&s.heading));
            for b in &s.blocks {
                block_html(&mut h, b);
            }
            h.push_str("</section>\n");
        }
        h.push_str("</main>\n</body>\n</html>\n");
        h
    }
}

fn block_html(h: &mut String, b: &Block) {
    match b {
        Block::Paragraph(t) => {
            let _ = writeln!(h, "<p>{}</p>", escape(t));
        }
        Block::Table { headers, rows } => {
            h.push_str("<table>\n<thead><tr>");
            for c in headers {
                let _ = write!(h, "<th>{}</th>", escape(c));
            }
            h.push_str("</tr></thead>\n<tbody>\n");
            for r in rows {
                h.push_str("<tr>");
                for c in r {
                    let _ = write!(h, "<td>{}</td>", escape(c));
                }
                h.push_str("</tr>\n");
            }
            h.push_str("</tbody>\n</table>\n");
        }
        Block::Png { bytes, caption } => {
            let _ = writeln!(
                h,
                "<figure><img alt=\"{}\" src=\"data:image/png;base64,{}\"><figcaption>{}</figcaption></figure>",
                escape(caption),
                base64(bytes),
                escape(caption)
            );
        }
        Block::Svg { svg, caption } => {
            // drop any XML declaration: inline SVG must start at the <svg> element
            let start = svg.find("<svg").unwrap_or(0);
            let _ = writeln!(
                h,
                "<figure class=\"svg\">{}<figcaption>{}</figcaption></figure>",
                &svg[start..],
                escape(caption)
            );
        }
        Block::Caution(t) => {
            let _ = writeln!(
                h,
                "<div class=\"caution\" role=\"note\"><strong>Caution.</strong> {}</div>",
                escape(t)
            );
        }
        Block::Preformatted(t) => {
            let _ = writeln!(h, "<pre>{}</pre>", escape(t));
        }
    }
}

const STYLE: &str = "body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:0;color:#1d1d1f;background:#fafafa}\
header{background:#22313f;color:#fff;padding:1.2em 2em}header h1{margin:0;font-size:1.6em}.sub{margin:.3em 0 0;opacity:.85}\
nav{padding:.5em 2em;background:#eef1f4;border-bottom:1px solid #d5dbe1}nav ol{margin:0;padding-left:1.2em;columns:3}\
nav a{color:#22313f}main{max-width:1100px;margin:0 auto;padding:0 2em 3em}\
section{margin-top:2em}h2{border-bottom:2px solid #22313f;padding-bottom:.2em}\
table{border-collapse:collapse;margin:1em 0;font-size:.92em}th,td{border:1px solid #c8ced4;padding:.3em .7em;text-align:left}\
th{background:#eef1f4}td{font-variant-numeric:tabular-nums}\
figure{margin:1.2em 0}figure img,figure svg{max-width:100%;height:auto;border:1px solid #d5dbe1;background:#fff}\
figcaption{font-size:.9em;color:#555;margin-top:.3em}\
.caution{border-left:6px solid #c0392b;background:#fdecea;padding:.8em 1em;margin:1em 0}\
pre{background:#f0f2f4;padding:.8em;overflow-x:auto;font-size:.85em}";

/// Standard base64 with padding (RFC 4648 §4).
pub fn base64(bytes: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for i in 0..4 {
            if i <= chunk.len() {
                out.push(ALPHABET[((n >> (18 - 6 * i)) & 63) as usize] as char);
            } else {
                out.push('=');
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_rfc_4648_test_vectors() {
        // RFC 4648 §10 test vectors
        for (input, expected) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(input.as_bytes()), expected);
        }
    }

    #[test]
    fn document_is_self_contained_and_escaped() {
        let mut r = Report::new("Run <1>", "sub");
        r.section("Maps")
            .png(vec![1, 2, 3], "a & b")
            .caution("not for navigation");
        r.section("Plots").svg(
            "<?xml version=\"1.0\"?><svg xmlns=\"http://www.w3.org/2000/svg\"></svg>".into(),
            "s",
        );
        let html = r.to_html();
        assert!(html.starts_with("<!DOCTYPE html>"));
        assert!(html.contains("<title>Run &lt;1&gt;</title>"));
        assert!(html.contains("src=\"data:image/png;base64,AQID\""));
        assert!(html.contains("a &amp; b"));
        assert!(html.contains("class=\"caution\""));
        assert!(
            !html.contains("<?xml"),
            "inline SVG keeps no XML declaration"
        );
        assert!(
            !html.contains("http://") || html.matches("http://").count() == 1,
            "only the SVG namespace"
        );
        assert_eq!(html.matches("<section").count(), 2);
    }
}
