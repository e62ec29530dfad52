//! EDGE_WEIGHT_SECTION: the nine TSPLIB 95 matrix layouts, read in one pass into a full
//! row-major matrix.

use super::error::{Ctx, TsplibError};
use super::lex::{parse_i64, parse_key_line, shown, Lines, NumError, Tokens};

/// An `EDGE_WEIGHT_FORMAT` that lays out an explicit matrix (TSPLIB 95 documentation,
/// section 1.1).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum MatrixFormat {
    FullMatrix,
    UpperRow,
    LowerRow,
    UpperDiagRow,
    LowerDiagRow,
    UpperCol,
    LowerCol,
    UpperDiagCol,
    LowerDiagCol,
}

/// Which part of the line (row or column) `a` the entries run over, as a range of `b`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Span {
    /// `0..n`
    All,
    /// `a+1..n`
    After,
    /// `a..n`
    AfterWithDiag,
    /// `0..a`
    Before,
    /// `0..=a`
    BeforeWithDiag,
}

impl MatrixFormat {
    pub(crate) const ALL: [MatrixFormat; 9] = [
        MatrixFormat::FullMatrix,
        MatrixFormat::UpperRow,
        MatrixFormat::LowerRow,
        MatrixFormat::UpperDiagRow,
        MatrixFormat::LowerDiagRow,
        MatrixFormat::UpperCol,
        MatrixFormat::LowerCol,
        MatrixFormat::UpperDiagCol,
        MatrixFormat::LowerDiagCol,
    ];

    pub(crate) fn keyword(self) -> &'static str {
        match self {
            MatrixFormat::FullMatrix => "FULL_MATRIX",
            MatrixFormat::UpperRow => "UPPER_ROW",
            MatrixFormat::LowerRow => "LOWER_ROW",
            MatrixFormat::UpperDiagRow => "UPPER_DIAG_ROW",
            MatrixFormat::LowerDiagRow => "LOWER_DIAG_ROW",
            MatrixFormat::UpperCol => "UPPER_COL",
            MatrixFormat::LowerCol => "LOWER_COL",
            MatrixFormat::UpperDiagCol => "UPPER_DIAG_COL",
            MatrixFormat::LowerDiagCol => "LOWER_DIAG_COL",
        }
    }

    pub(crate) fn from_keyword(word: &str) -> Option<MatrixFormat> {
        MatrixFormat::ALL.into_iter().find(|f| f.keyword() == word)
    }

    /// The entries come as lines `a = 0..n`, each over a span of `b`; `col` says whether `a`
    /// is the column (then entry `(b, a)`) or the row (entry `(a, b)`).
    ///
    /// "Upper" means row < column. Read row-wise, the upper triangle of row `a` lies after the
    /// diagonal; read column-wise, the upper part of column `a` lies before it. Hence UPPER_COL
    /// walks exactly the positions of LOWER_ROW transposed, and so on.
    fn layout(self) -> (Span, bool) {
        match self {
            MatrixFormat::FullMatrix => (Span::All, false),
            MatrixFormat::UpperRow => (Span::After, false),
            MatrixFormat::LowerRow => (Span::Before, false),
            MatrixFormat::UpperDiagRow => (Span::AfterWithDiag, false),
            MatrixFormat::LowerDiagRow => (Span::BeforeWithDiag, false),
            MatrixFormat::UpperCol => (Span::Before, true),
            MatrixFormat::LowerCol => (Span::After, true),
            MatrixFormat::UpperDiagCol => (Span::BeforeWithDiag, true),
            MatrixFormat::LowerDiagCol => (Span::AfterWithDiag, true),
        }
    }

    /// True for the formats that give one triangle and so only describe symmetric matrices.
    pub(crate) fn is_triangular(self) -> bool {
        self != MatrixFormat::FullMatrix
    }

    /// How many numbers the section holds for `n` nodes; `None` on overflow.
    pub(crate) fn entry_count(self, n: usize) -> Option<usize> {
        let square = n.checked_mul(n)?;
        Some(match self.layout().0 {
            Span::All => square,
            Span::After | Span::Before => (square - n) / 2,
            Span::AfterWithDiag | Span::BeforeWithDiag => (square - n) / 2 + n,
        })
    }
}

/// The matrix positions of the section's entries, in file order.
struct Positions {
    n: usize,
    span: Span,
    col: bool,
    a: usize,
    b: usize,
}

impl Positions {
    fn new(n: usize, format: MatrixFormat) -> Self {
        let (span, col) = format.layout();
        Positions {
            n,
            span,
            col,
            a: 0,
            b: 0,
        }
    }
}

impl Iterator for Positions {
    type Item = (usize, usize);
    fn next(&mut self) -> Option<(usize, usize)> {
        while self.a < self.n {
            let a = self.a;
            let (lo, hi) = match self.span {
                Span::All => (0, self.n),
                Span::After => (a + 1, self.n),
                Span::AfterWithDiag => (a, self.n),
                Span::Before => (0, a),
                Span::BeforeWithDiag => (0, a + 1),
            };
            let b = self.b.max(lo);
            if b < hi {
                self.b = b + 1;
                return Some(if self.col { (b, a) } else { (a, b) });
            }
            self.a += 1;
            self.b = 0;
        }
        None
    }
}

/// Reads the numbers after an `EDGE_WEIGHT_SECTION` line (number `header`) up to the next
/// keyword line and returns the full `n * n` row-major matrix. Triangular formats are mirrored;
/// their diagonal, when not given, is zero.
pub(crate) fn read_weights(
    ctx: Ctx<'_>,
    lines: &mut Lines<'_>,
    n: usize,
    format: MatrixFormat,
    header: usize,
) -> Result<Vec<i64>, TsplibError> {
    let too_big = || {
        ctx.err(
            header,
            format!(
                "DIMENSION {n} with {} needs more weights than this file could hold",
                format.keyword()
            ),
        )
    };
    let expected = format.entry_count(n).ok_or_else(too_big)?;
    // Every weight takes at least one digit and one separator, so a file cannot hold more than
    // about half its remaining length in weights. When it cannot hold them all, nothing is
    // allocated for n * n; the tokens are still read to report the first concrete problem, and
    // the section is then certain to end short.
    let plausible = expected <= lines.remaining_bytes() / 2 + 1;
    let square = n.checked_mul(n).ok_or_else(too_big)?;
    if plausible {
        wend::memory::check(wend::memory::square(n, 8), || {
            format!("the full cost matrix of DIMENSION {n}")
        })
        .map_err(|e| ctx.err(header, e.to_string()))?;
    }
    let mut full = if plausible {
        vec![0i64; square]
    } else {
        Vec::new()
    };
    let mirror = format.is_triangular();
    let mut positions = Positions::new(n, format);
    let mut count = 0usize;
    let mut last = header;
    while let Some(line) = lines.next_nonblank() {
        if parse_key_line(line.text).is_some() {
            lines.push_back(line);
            break;
        }
        for tok in Tokens::new(line.text) {
            let Some((i, j)) = positions.next() else {
                return Err(ctx.err(
                    line.no,
                    format!(
                        "EDGE_WEIGHT_SECTION has more than the {expected} weights of DIMENSION \
                         {n} with {}: extra {}",
                        format.keyword(),
                        shown(tok)
                    ),
                ));
            };
            let w = parse_i64(tok).map_err(|e| {
                let what = match e {
                    NumError::Overflow => {
                        format!("weight {} does not fit a 64-bit integer", shown(tok))
                    }
                    NumError::NotIntegral => format!(
                        "expected an integer weight, found {} (explicit weights are integers)",
                        shown(tok)
                    ),
                    NumError::NotNumber | NumError::NotFinite => {
                        format!("expected an integer weight, found {}", shown(tok))
                    }
                };
                ctx.err(
                    line.no,
                    format!(
                        "{what} (entry {} of row {}, column {})",
                        count + 1,
                        i + 1,
                        j + 1
                    ),
                )
            })?;
            if let Some(slot) = full.get_mut(i * n + j) {
                *slot = w;
            }
            if mirror {
                if let Some(slot) = full.get_mut(j * n + i) {
                    *slot = w;
                }
            }
            count += 1;
        }
        last = line.no;
    }
    if count < expected {
        return Err(ctx.err(
            last,
            format!(
                "EDGE_WEIGHT_SECTION ended after {count} of {expected} weights \
                 (DIMENSION {n}, {})",
                format.keyword()
            ),
        ));
    }
    Ok(full)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Layouts as defined in the TSPLIB 95 documentation, section 1.1 (EDGE_WEIGHT_FORMAT).
    #[test]
    fn positions_follow_the_documented_layouts() {
        let p = |f| Positions::new(3, f).collect::<Vec<_>>();
        assert_eq!(p(MatrixFormat::UpperRow), [(0, 1), (0, 2), (1, 2)]);
        assert_eq!(p(MatrixFormat::LowerRow), [(1, 0), (2, 0), (2, 1)]);
        assert_eq!(
            p(MatrixFormat::UpperDiagRow),
            [(0, 0), (0, 1), (0, 2), (1, 1), (1, 2), (2, 2)]
        );
        assert_eq!(
            p(MatrixFormat::LowerDiagRow),
            [(0, 0), (1, 0), (1, 1), (2, 0), (2, 1), (2, 2)]
        );
        // Column-wise: column 1 holds (0,1); column 2 holds (0,2), (1,2).
        assert_eq!(p(MatrixFormat::UpperCol), [(0, 1), (0, 2), (1, 2)]);
        assert_eq!(p(MatrixFormat::LowerCol), [(1, 0), (2, 0), (2, 1)]);
        assert_eq!(
            p(MatrixFormat::UpperDiagCol),
            [(0, 0), (0, 1), (1, 1), (0, 2), (1, 2), (2, 2)]
        );
        assert_eq!(
            p(MatrixFormat::LowerDiagCol),
            [(0, 0), (1, 0), (2, 0), (1, 1), (2, 1), (2, 2)]
        );
        assert_eq!(p(MatrixFormat::FullMatrix).len(), 9);
        // From four nodes on, row-wise and column-wise orders of one triangle differ.
        let q = |f| Positions::new(4, f).collect::<Vec<_>>();
        assert_eq!(
            q(MatrixFormat::UpperRow),
            [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)]
        );
        assert_eq!(
            q(MatrixFormat::UpperCol),
            [(0, 1), (0, 2), (1, 2), (0, 3), (1, 3), (2, 3)]
        );
        assert_eq!(
            q(MatrixFormat::LowerCol),
            [(1, 0), (2, 0), (3, 0), (2, 1), (3, 1), (3, 2)]
        );
    }

    #[test]
    fn counts_match_positions() {
        for f in MatrixFormat::ALL {
            for n in 0..7 {
                assert_eq!(
                    Positions::new(n, f).count(),
                    f.entry_count(n).unwrap(),
                    "{f:?} {n}"
                );
            }
            assert_eq!(f.entry_count(usize::MAX), None);
        }
    }
}
