//! Reader for QAPLIB instance (NAME.dat) and solution (NAME.sln) files.
//!
//! QAPLIB: R. E. Burkard, S. E. Karisch and F. Rendl, "QAPLIB – A Quadratic
//! Assignment Problem Library", *J. Global Optimization* 10:391–403, 1997.
//!
//! NAME.dat holds n, then the n×n matrix A, then the n×n matrix B, as
//! whitespace-separated numbers; rows may wrap over lines, so the file is
//! read by token. The objective is Σ_ij a_ij · b_p(i)p(j): A are the flows,
//! B the distances, p(i) the location of facility i.
//!
//! NAME.sln holds n and the optimal value, then optionally a 1-based
//! permutation. Some files leave out n ("value perm…" or just "value").
//! Some stated permutations give the value only when read inverted
//! (location → facility); [`Solution::permutation`] is as written.

use std::path::Path;

use super::qap::{Problem, Spec};

/// A QAPLIB instance.
#[derive(Debug, Clone, PartialEq)]
pub struct Instance {
    /// Size.
    pub n: usize,
    /// Flows, n×n row-major.
    pub a: Vec<f64>,
    /// Distances, n×n row-major.
    pub b: Vec<f64>,
}

/// A QAPLIB solution file.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// Size, when the file states it.
    pub n: Option<usize>,
    /// The optimal (or best known) value.
    pub value: f64,
    /// The stated permutation, converted to 0-based, when the file has one.
    pub permutation: Option<Vec<usize>>,
}

fn tokens(text: &str, what: &str) -> Result<Vec<f64>, String> {
    text.split_whitespace()
        .enumerate()
        .map(|(i, t)| {
            t.parse::<f64>().map_err(|_| format!("{what}: token {} is \"{t}\", not a number", i + 1))
        })
        .collect()
}

fn size(x: f64, what: &str) -> Result<usize, String> {
    if x.fract() == 0.0 && (1.0..=1e6).contains(&x) {
        Ok(x as usize)
    } else {
        Err(format!("{what}: the size must be a positive integer, got {x}"))
    }
}

/// Read an instance from the text of a NAME.dat file.
pub fn parse_dat(text: &str) -> Result<Instance, String> {
    let v = tokens(text, "instance")?;
    let Some(&first) = v.first() else { return Err("instance: the file is empty".into()) };
    let n = size(first, "instance")?;
    if v.len() != 1 + 2 * n * n {
        return Err(format!(
            "instance: n = {n} needs {} numbers after it (two {n}×{n} matrices), found {}",
            2 * n * n,
            v.len() - 1
        ));
    }
    Ok(Instance { n, a: v[1..1 + n * n].to_vec(), b: v[1 + n * n..].to_vec() })
}

/// The 0-based permutation for 1-based tokens, if they are a permutation of 1..=len.
fn one_based(t: &[f64]) -> Option<Vec<usize>> {
    let len = t.len();
    let mut seen = vec![false; len];
    let mut p = Vec::with_capacity(len);
    for &x in t {
        if x.fract() != 0.0 || x < 1.0 || x > len as f64 || seen[x as usize - 1] {
            return None;
        }
        seen[x as usize - 1] = true;
        p.push(x as usize - 1);
    }
    Some(p)
}

/// Read a solution from the text of a NAME.sln file: "n value [perm]",
/// "value perm" or "value".
pub fn parse_sln(text: &str) -> Result<Solution, String> {
    let v = tokens(text, "solution")?;
    match v.len() {
        0 => Err("solution: the file is empty".into()),
        1 => Ok(Solution { n: None, value: v[0], permutation: None }),
        2 => Ok(Solution { n: Some(size(v[0], "solution")?), value: v[1], permutation: None }),
        len => {
            if v[0] == (len - 2) as f64 {
                if let Some(p) = one_based(&v[2..]) {
                    return Ok(Solution { n: Some(len - 2), value: v[1], permutation: Some(p) });
                }
            }
            match one_based(&v[1..]) {
                Some(p) => Ok(Solution { n: None, value: v[0], permutation: Some(p) }),
                None => Err(format!(
                    "solution: {len} numbers are neither \"n value permutation\" nor \"value permutation\" \
                     (the permutation must hold 1..n once each)"
                )),
            }
        }
    }
}

/// Read NAME.dat from a path.
pub fn read_dat(path: &Path) -> Result<Instance, String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
    parse_dat(&text).map_err(|e| format!("{}: {e}", path.display()))
}

/// Read NAME.sln from a path.
pub fn read_sln(path: &Path) -> Result<Solution, String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
    parse_sln(&text).map_err(|e| format!("{}: {e}", path.display()))
}

impl Instance {
    /// Σ_ij a_ij · b_p(i)p(j), with `p[i]` the location of facility i. Errors
    /// if `p` is not a permutation of 0..n.
    pub fn objective(&self, p: &[usize]) -> Result<f64, String> {
        let n = self.n;
        if p.len() != n || one_based(&p.iter().map(|&x| x as f64 + 1.0).collect::<Vec<_>>()).is_none() {
            return Err(format!("not a permutation of 0..{n}"));
        }
        let mut s = 0.0;
        for i in 0..n {
            for j in 0..n {
                s += self.a[i * n + j] * self.b[p[i] * n + p[j]];
            }
        }
        Ok(s)
    }

    /// The layout problem: n departments with flows A, n locations with distances B.
    pub fn problem(&self) -> Result<Problem, String> {
        Problem::new(Spec::new(self.n, self.n, self.a.clone(), self.b.clone()))
    }
}

/// The inverse permutation (`q[p[i]] = i`): reads a location → facility list
/// as facility → location. `p` must be a permutation of 0..len.
pub fn inverse(p: &[usize]) -> Vec<usize> {
    let mut q = vec![0; p.len()];
    for (i, &k) in p.iter().enumerate() {
        if k < q.len() {
            q[k] = i;
        }
    }
    q
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_wrapped_rows_and_every_solution_form() {
        let inst = parse_dat("2\n0 1\n\n1\n0  0 3 3 0\n").unwrap();
        assert_eq!(inst.n, 2);
        assert_eq!(inst.a, vec![0.0, 1.0, 1.0, 0.0]);
        assert_eq!(inst.objective(&[1, 0]).unwrap(), 6.0);
        let s = parse_sln(" 3 10\n 2 3 1\n").unwrap();
        assert_eq!((s.n, s.value, s.permutation), (Some(3), 10.0, Some(vec![1, 2, 0])));
        let s = parse_sln("6124\n2 3 1\n").unwrap();
        assert_eq!((s.n, s.value, s.permutation), (None, 6124.0, Some(vec![1, 2, 0])));
        let s = parse_sln("88900\n").unwrap();
        assert_eq!((s.n, s.value, s.permutation), (None, 88900.0, None));
        assert!(parse_dat("2 0 1").unwrap_err().contains("needs 8 numbers"));
        assert!(parse_dat("2 x").unwrap_err().contains("\"x\""));
        assert!(parse_sln("3 10 1 1 2").is_err());
        assert_eq!(inverse(&[2, 0, 1]), vec![1, 2, 0]);
    }
}
