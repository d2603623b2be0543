//! The layout problem the searches solve: a Koopmans–Beckmann quadratic assignment with fixed costs and rules.
//!
//! n departments go to m ≥ n locations. With φ(i) the location of
//! department i, a layout costs
//!
//! Σ_ij f_ij · d_φ(i)φ(j) + Σ_i c_iφ(i)
//!
//! (T. C. Koopmans and M. Beckmann, *Econometrica* 25(1):53–76, 1957, plus a
//! linear term). Flows f and distances d may be asymmetric. A fixed cost of
//! `f64::INFINITY` forbids the pair; pinned departments and locations kept
//! empty are stored as forbidden pairs, so every search treats them alike.
//!
//! Internally the problem is square: m facilities to m locations, where
//! facilities n..m are placeholders with no flow and no fixed cost (the
//! locations they hold are the empty ones). A *permutation* `p` has m
//! entries, `p[i]` the location of facility i; a *layout* has n, one per real
//! department. Indices are 0-based.
//!
//! Adjacency rules (pairs that must, or must not, sit in neighbouring
//! locations) are not hard constraints: each broken rule adds a penalty M to
//! the objective, so a search can pass through layouts that break them. M is
//! larger than the difference in cost between any two layouts (see
//! [`Problem::penalty`]), so fewer broken rules always wins.

use rand::RngExt;

use layflow_engine::Stream;

/// What a layout problem is made of, before it is checked.
///
/// Matrices are row-major. Start from [`Spec::new`] and set the optional
/// parts.
#[derive(Debug, Clone, Default)]
pub struct Spec {
    /// Number of departments, n.
    pub departments: usize,
    /// Number of locations, m ≥ n.
    pub locations: usize,
    /// n×n: `flow[i * n + j]` is the flow from department i to department j.
    pub flow: Vec<f64>,
    /// m×m: `distance[k * m + l]` is the distance from location k to location l.
    pub distance: Vec<f64>,
    /// n×m, optional: `fixed_cost[i * m + k]` is the cost of department i at
    /// location k (a reinforced floor, a utility connection).
    /// `f64::INFINITY` forbids the pair.
    pub fixed_cost: Option<Vec<f64>>,
    /// (department, location): the department never moves from there.
    pub pinned: Vec<(usize, usize)>,
    /// Locations no department may take.
    pub keep_empty: Vec<usize>,
    /// m×m, optional: `neighbours[k * m + l]` says locations k and l are
    /// adjacent. Must be symmetric; the diagonal is ignored. Needed when there
    /// are adjacency rules.
    pub neighbours: Option<Vec<bool>>,
    /// Department pairs that must sit in neighbouring locations.
    pub adjacent: Vec<(usize, usize)>,
    /// Department pairs that must not sit in neighbouring locations.
    pub apart: Vec<(usize, usize)>,
}

impl Spec {
    /// A plain problem: flows among `departments`, distances among `locations`, no rules.
    pub fn new(departments: usize, locations: usize, flow: Vec<f64>, distance: Vec<f64>) -> Spec {
        Spec { departments, locations, flow, distance, ..Spec::default() }
    }
}

/// The cost of one layout, broken down.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Evaluation {
    /// Σ_ij f_ij · d_φ(i)φ(j): the flow-distance (handling) cost.
    pub flow_cost: f64,
    /// Σ_i c_iφ(i) over departments on allowed locations.
    pub fixed_cost: f64,
    /// `flow_cost + fixed_cost`: the cost of the layout.
    pub cost: f64,
    /// Adjacency rules broken.
    pub violations: usize,
    /// Departments on a location they may not take (pinned elsewhere, kept
    /// empty or an infinite fixed cost). Searches never produce these.
    pub forbidden: usize,
    /// What the searches minimise: `cost + penalty · violations`, or +∞ when
    /// `forbidden > 0`.
    pub objective: f64,
    /// No adjacency rule broken and no department on a forbidden location.
    pub constraints_met: bool,
}

/// A checked layout problem, ready to search. Build it with [`Problem::new`].
#[derive(Debug, Clone)]
pub struct Problem {
    /// Real departments.
    pub(crate) n: usize,
    /// Locations = facilities of the padded square problem.
    pub(crate) m: usize,
    /// The flows as given (n×n), for [`Problem::evaluate`].
    flow: Vec<f64>,
    /// The distances as given (m×m).
    distance: Vec<f64>,
    /// Padded m×m flows used by the search (symmetrised when that is exact, see `symmetric`).
    pub(crate) a: Vec<f64>,
    /// Transpose of `a` (rows of it are columns of `a`: sequential reads in the delta loop).
    pub(crate) at: Vec<f64>,
    /// m×m distances used by the search (symmetrised like `a`).
    pub(crate) b: Vec<f64>,
    /// Both `a` and `b` are symmetric, so the cheaper delta formulas apply.
    pub(crate) symmetric: bool,
    /// m×m fixed costs, forbidden pairs stored as 0 (they are never taken); dummy rows 0.
    pub(crate) c: Vec<f64>,
    /// Any nonzero fixed cost.
    pub(crate) has_fixed: bool,
    /// m×m: facility i may take location k.
    pub(crate) allowed: Vec<bool>,
    /// Some real department has a forbidden location (pins, empty locations, infinite costs).
    pub(crate) restricted: bool,
    /// Facility may move (not pinned).
    pub(crate) movable: Vec<bool>,
    /// No pins: every facility may move.
    pub(crate) all_movable: bool,
    /// m×m location adjacency (empty without rules).
    pub(crate) neighbours: Vec<bool>,
    /// Rules of facility i: `rule_other[rule_start[i]..rule_start[i + 1]]`,
    /// with `rule_want` true for "must be adjacent". Each rule is stored from both ends.
    pub(crate) rule_start: Vec<usize>,
    pub(crate) rule_other: Vec<usize>,
    pub(crate) rule_want: Vec<bool>,
    /// Number of distinct rules.
    rules: usize,
    /// M, the cost of one broken rule.
    pub(crate) penalty: f64,
    /// All data are integers small enough that every sum the searches form is
    /// exact in f64; otherwise maintained deltas are refreshed now and then.
    pub(crate) exact: bool,
    /// Differences below this are rounding noise (0 when `exact`).
    pub(crate) tolerance: f64,
}

fn check_finite(what: &str, v: &[f64], cols: usize) -> Result<(), String> {
    match v.iter().position(|x| !x.is_finite()) {
        Some(i) => Err(format!(
            "{what}[{}][{}] is {}; {what} entries must be finite numbers",
            i / cols,
            i % cols,
            v[i]
        )),
        None => Ok(()),
    }
}

fn is_symmetric(v: &[f64], m: usize) -> bool {
    (0..m).all(|i| (0..i).all(|j| v[i * m + j] == v[j * m + i]))
}

/// (x + xᵀ)/2: the cost Σ a_ij b_φ(i)φ(j) is unchanged when one matrix is
/// symmetric and the other is replaced by its symmetric part.
fn symmetrise(v: &mut [f64], m: usize) {
    for i in 0..m {
        for j in 0..i {
            let s = 0.5 * (v[i * m + j] + v[j * m + i]);
            v[i * m + j] = s;
            v[j * m + i] = s;
        }
    }
}

/// Kuhn's augmenting-path matching: can every real department get an allowed
/// location of its own? `order[i]` lists the locations tried for department
/// i, in order. Fills `at_loc[k]` with the department at k (or usize::MAX).
fn matching(n: usize, order: &[Vec<usize>], at_loc: &mut [usize]) -> Result<(), usize> {
    fn augment(i: usize, order: &[Vec<usize>], at_loc: &mut [usize], seen: &mut [bool]) -> bool {
        for &k in &order[i] {
            if seen[k] {
                continue;
            }
            seen[k] = true;
            if at_loc[k] == usize::MAX || augment(at_loc[k], order, at_loc, seen) {
                at_loc[k] = i;
                return true;
            }
        }
        false
    }
    at_loc.fill(usize::MAX);
    let mut seen = vec![false; at_loc.len()];
    for i in 0..n {
        seen.fill(false);
        if !augment(i, order, at_loc, &mut seen) {
            return Err(i);
        }
    }
    Ok(())
}

impl Problem {
    /// Check a [`Spec`] and prepare it for search.
    ///
    /// Refuses, with a message naming the offending entry: empty or
    /// mis-sized matrices, non-finite flows or distances, NaN or −∞ fixed
    /// costs, more departments than locations, out-of-range indices, a
    /// department pinned twice or two departments pinned to one location, a
    /// pin on a location kept empty or with an infinite fixed cost, a
    /// department with no allowed location, rules without a neighbour
    /// relation, an asymmetric neighbour relation, a rule pairing a department
    /// with itself, a pair both adjacent and apart, and rules that leave no
    /// layout at all (no way to give every department an allowed location).
    pub fn new(spec: Spec) -> Result<Problem, String> {
        let Spec {
            departments: n,
            locations: m,
            flow,
            distance,
            fixed_cost,
            pinned,
            keep_empty,
            neighbours,
            adjacent,
            apart,
        } = spec;
        if n == 0 {
            return Err("a layout problem needs at least one department".into());
        }
        if n > m {
            return Err(format!("{n} departments do not fit in {m} locations"));
        }
        if flow.len() != n * n {
            return Err(format!("the flow matrix must be {n}×{n} ({} entries), got {}", n * n, flow.len()));
        }
        if distance.len() != m * m {
            return Err(format!(
                "the distance matrix must be {m}×{m} ({} entries), got {}",
                m * m,
                distance.len()
            ));
        }
        check_finite("flow", &flow, n)?;
        check_finite("distance", &distance, m)?;

        let mut allowed = vec![true; m * m];
        let mut c = vec![0.0; m * m];
        if let Some(fc) = &fixed_cost {
            if fc.len() != n * m {
                return Err(format!(
                    "the fixed-cost matrix must be {n}×{m} ({} entries), got {}",
                    n * m,
                    fc.len()
                ));
            }
            for (idx, &x) in fc.iter().enumerate() {
                let (i, k) = (idx / m, idx % m);
                if x.is_nan() || x == f64::NEG_INFINITY {
                    return Err(format!(
                        "fixed_cost[{i}][{k}] is {x}; fixed costs must be numbers, or +infinity to forbid the pair"
                    ));
                }
                if x == f64::INFINITY {
                    allowed[i * m + k] = false;
                } else {
                    c[i * m + k] = x;
                }
            }
        }
        let mut empty = vec![false; m];
        for &k in &keep_empty {
            if k >= m {
                return Err(format!("location {k} is kept empty, but there are only {m} locations (0..{m})"));
            }
            empty[k] = true;
            for i in 0..n {
                allowed[i * m + k] = false;
            }
        }
        let mut movable = vec![true; m];
        let mut pin_of = vec![None; n];
        let mut pinned_at = vec![None; m];
        for &(i, k) in &pinned {
            if i >= n {
                return Err(format!("department {i} is pinned, but there are only {n} departments (0..{n})"));
            }
            if k >= m {
                return Err(format!(
                    "department {i} is pinned to location {k}, but there are only {m} locations"
                ));
            }
            match pin_of[i] {
                Some(k0) if k0 != k => {
                    return Err(format!("department {i} is pinned to two locations, {k0} and {k}"));
                }
                _ => {}
            }
            if let Some(j) = pinned_at[k] {
                if j != i {
                    return Err(format!("departments {j} and {i} are both pinned to location {k}"));
                }
            }
            if empty[k] {
                return Err(format!("department {i} is pinned to location {k}, which is kept empty"));
            }
            if !allowed[i * m + k] {
                return Err(format!(
                    "department {i} is pinned to location {k}, where its fixed cost is infinite"
                ));
            }
            pin_of[i] = Some(k);
            pinned_at[k] = Some(i);
        }
        for (i, pin) in pin_of.iter().enumerate() {
            if let Some(k) = *pin {
                movable[i] = false;
                for l in 0..m {
                    allowed[i * m + l] = l == k;
                }
            }
        }
        // A pinned location is no one else's, placeholders included.
        for (k, who) in pinned_at.iter().enumerate() {
            if let Some(j) = *who {
                for i in (0..m).filter(|&i| i != j) {
                    allowed[i * m + k] = false;
                }
            }
        }
        for i in 0..n {
            if !(0..m).any(|k| allowed[i * m + k]) {
                return Err(format!(
                    "department {i} may not take any location: each is kept empty, pinned to another department \
                     or has an infinite fixed cost for it"
                ));
            }
        }
        let order: Vec<Vec<usize>> =
            (0..n).map(|i| (0..m).filter(|&k| allowed[i * m + k]).collect()).collect();
        let mut at_loc = vec![usize::MAX; m];
        if let Err(i) = matching(n, &order, &mut at_loc) {
            return Err(format!(
                "no layout gives every department an allowed location of its own (department {i} cannot be \
                 placed once the others are); check the pins, the locations kept empty and the infinite fixed costs"
            ));
        }
        // Pinned locations never come free (their departments never move), so
        // only the other forbidden pairs need checking during a search.
        let restricted =
            (0..n).any(|i| movable[i] && (0..m).any(|k| pinned_at[k].is_none() && !allowed[i * m + k]));

        // Adjacency rules.
        let has_rules = !adjacent.is_empty() || !apart.is_empty();
        let neighbours = match neighbours {
            Some(nb) => {
                if nb.len() != m * m {
                    return Err(format!(
                        "the neighbour relation must be {m}×{m} ({} entries), got {}",
                        m * m,
                        nb.len()
                    ));
                }
                for k in 0..m {
                    for l in 0..k {
                        if nb[k * m + l] != nb[l * m + k] {
                            return Err(format!(
                                "the neighbour relation must be symmetric: locations {k} and {l} disagree"
                            ));
                        }
                    }
                }
                nb
            }
            None if has_rules => {
                return Err("adjacency rules need a neighbour relation between locations".into());
            }
            None => Vec::new(),
        };
        let mut pairs: Vec<(usize, usize, bool)> = Vec::new();
        for (list, want, name) in [(&adjacent, true, "adjacent"), (&apart, false, "apart")] {
            for &(i, j) in list {
                if i >= n || j >= n {
                    return Err(format!(
                        "the {name} pair ({i}, {j}) names a department beyond the {n} there are"
                    ));
                }
                if i == j {
                    return Err(format!("the {name} pair ({i}, {j}) pairs a department with itself"));
                }
                let key = (i.min(j), i.max(j));
                match pairs.iter().find(|&&(a, b, _)| (a, b) == key) {
                    Some(&(_, _, w)) if w != want => {
                        return Err(format!(
                            "departments {} and {} must be both adjacent and apart",
                            key.0, key.1
                        ));
                    }
                    Some(_) => {} // a repeated rule counts once
                    None => pairs.push((key.0, key.1, want)),
                }
            }
        }
        let mut rule_start = vec![0; m + 1];
        for &(i, j, _) in &pairs {
            rule_start[i + 1] += 1;
            rule_start[j + 1] += 1;
        }
        for i in 0..m {
            rule_start[i + 1] += rule_start[i];
        }
        let mut fill = rule_start.clone();
        let mut rule_other = vec![0; 2 * pairs.len()];
        let mut rule_want = vec![false; 2 * pairs.len()];
        for &(i, j, w) in &pairs {
            for (x, y) in [(i, j), (j, i)] {
                rule_other[fill[x]] = y;
                rule_want[fill[x]] = w;
                fill[x] += 1;
            }
        }

        // Padded, possibly symmetrised matrices for the search.
        let mut a = vec![0.0; m * m];
        for i in 0..n {
            a[i * m..i * m + n].copy_from_slice(&flow[i * n..(i + 1) * n]);
        }
        let mut b = distance.clone();
        let (sa, sb) = (is_symmetric(&a, m), is_symmetric(&b, m));
        if sa && !sb {
            symmetrise(&mut b, m);
        } else if sb && !sa {
            symmetrise(&mut a, m);
        }
        let symmetric = sa || sb;
        let mut at = vec![0.0; m * m];
        for i in 0..m {
            for j in 0..m {
                at[j * m + i] = a[i * m + j];
            }
        }

        // M: larger than |cost(φ) − cost(ψ)| for any two layouts, which is at
        // most 2·(Σ|f|·max|d| + Σ_i max_k |c_ik|); rounded up to an integer so
        // integer data stay integer.
        let fsum: f64 = flow.iter().map(|x| x.abs()).sum();
        let dmax = distance.iter().fold(0.0f64, |x, y| x.max(y.abs()));
        let cmax: f64 =
            (0..n).map(|i| c[i * m..(i + 1) * m].iter().fold(0.0f64, |x, y| x.max(y.abs()))).sum();
        let spread = fsum * dmax + cmax;
        let penalty = if has_rules { (1.0 + 2.0 * spread).ceil() } else { 0.0 };
        let scale = spread + penalty * pairs.len() as f64;
        let integral = flow.iter().chain(&distance).chain(&c).all(|x| x.fract() == 0.0);
        // Factor 4: symmetrised halves and delta sums (several cost terms) stay below 2^53.
        let exact = integral && 4.0 * scale < 2f64.powi(52);
        let tolerance = if exact { 0.0 } else { 1e-10 * scale.max(1.0) };
        let has_fixed = c.iter().any(|&x| x != 0.0);

        Ok(Problem {
            n,
            m,
            flow,
            distance,
            a,
            at,
            b,
            symmetric,
            c,
            has_fixed,
            allowed,
            restricted,
            all_movable: movable.iter().all(|&x| x),
            movable,
            neighbours,
            rule_start,
            rule_other,
            rule_want,
            rules: pairs.len(),
            penalty,
            exact,
            tolerance,
        })
    }

    /// Number of departments, n.
    pub fn departments(&self) -> usize {
        self.n
    }

    /// Number of locations, m (also the length of a permutation).
    pub fn locations(&self) -> usize {
        self.m
    }

    /// Number of distinct adjacency rules.
    pub fn rules(&self) -> usize {
        self.rules
    }

    /// M, the objective's charge per broken adjacency rule:
    /// ⌈1 + 2·(Σ_ij |f_ij| · max_kl |d_kl| + Σ_i max_k |c_ik|)⌉ (finite c only),
    /// or 0 without rules. Two layouts differ in cost by at most half of M,
    /// so a layout that breaks fewer rules always has the lower objective.
    pub fn penalty(&self) -> f64 {
        self.penalty
    }

    /// Whether department `i` may take location `k` (false for out-of-range indices).
    pub fn allows(&self, i: usize, k: usize) -> bool {
        i < self.n && k < self.m && self.allowed[i * self.m + k]
    }

    /// The cost of a layout (`layout[i]`: location of department i), from the
    /// data as given. Errors if the layout is not n distinct locations in 0..m.
    pub fn evaluate(&self, layout: &[usize]) -> Result<Evaluation, String> {
        self.check_layout(layout)?;
        Ok(self.evaluate_unchecked(layout))
    }

    pub(crate) fn evaluate_unchecked(&self, layout: &[usize]) -> Evaluation {
        let (n, m) = (self.n, self.m);
        let mut flow_cost = 0.0;
        for i in 0..n {
            let row = &self.distance[layout[i] * m..(layout[i] + 1) * m];
            for j in 0..n {
                flow_cost += self.flow[i * n + j] * row[layout[j]];
            }
        }
        let (mut fixed_cost, mut forbidden) = (0.0, 0);
        for (i, &k) in layout.iter().enumerate() {
            if self.allowed[i * m + k] {
                fixed_cost += self.c[i * m + k];
            } else {
                forbidden += 1;
            }
        }
        let violations = self.violations(layout);
        let cost = flow_cost + fixed_cost;
        let objective = if forbidden > 0 { f64::INFINITY } else { cost + self.penalty * violations as f64 };
        Evaluation {
            flow_cost,
            fixed_cost,
            cost,
            violations,
            forbidden,
            objective,
            constraints_met: violations == 0 && forbidden == 0,
        }
    }

    /// Broken adjacency rules of a layout (or of a permutation: only the first n entries are read).
    pub(crate) fn violations(&self, p: &[usize]) -> usize {
        let mut v = 0;
        for i in 0..self.n {
            for r in self.rule_start[i]..self.rule_start[i + 1] {
                let j = self.rule_other[r];
                if j > i && self.broken(p[i], p[j], self.rule_want[r]) {
                    v += 1;
                }
            }
        }
        v
    }

    #[inline]
    fn broken(&self, k: usize, l: usize, want: bool) -> bool {
        self.neighbours[k * self.m + l] != want
    }

    fn check_layout(&self, layout: &[usize]) -> Result<(), String> {
        if layout.len() != self.n {
            return Err(format!(
                "a layout gives a location for each of the {} departments, got {}",
                self.n,
                layout.len()
            ));
        }
        let mut taken = vec![usize::MAX; self.m];
        for (i, &k) in layout.iter().enumerate() {
            if k >= self.m {
                return Err(format!(
                    "department {i} is at location {k}, but there are only {} locations",
                    self.m
                ));
            }
            if taken[k] != usize::MAX {
                return Err(format!("departments {} and {i} are both at location {k}", taken[k]));
            }
            taken[k] = i;
        }
        Ok(())
    }

    /// The permutation (m entries) for a layout: placeholders fill the free
    /// locations in increasing order. Errors if the layout is malformed or puts
    /// a department on a location it may not take.
    pub fn permutation(&self, layout: &[usize]) -> Result<Vec<usize>, String> {
        self.check_layout(layout)?;
        for (i, &k) in layout.iter().enumerate() {
            if !self.allowed[i * self.m + k] {
                return Err(format!(
                    "department {i} is at location {k}, which it may not take (pinned elsewhere, kept empty or an \
                     infinite fixed cost)"
                ));
            }
        }
        let mut p = layout.to_vec();
        let mut free = vec![true; self.m];
        for &k in layout {
            free[k] = false;
        }
        p.extend((0..self.m).filter(|&k| free[k]));
        Ok(p)
    }

    /// A random permutation that respects every forbidden pair, drawn from
    /// `rng`. Uniform over all layouts when nothing is forbidden; otherwise
    /// departments take locations in random order, with augmenting paths
    /// (Kuhn's matching) when one gets stuck.
    pub fn random_permutation(&self, rng: &mut Stream) -> Vec<usize> {
        let (n, m) = (self.n, self.m);
        let mut order: Vec<Vec<usize>> = (0..n)
            .map(|i| {
                let mut ks: Vec<usize> = (0..m).filter(|&k| self.allowed[i * m + k]).collect();
                shuffle(&mut ks, rng);
                ks
            })
            .collect();
        // Departments in random order: matching(0..n) then relabels.
        let mut who: Vec<usize> = (0..n).collect();
        shuffle(&mut who, rng);
        let shuffled: Vec<Vec<usize>> = who.iter().map(|&i| std::mem::take(&mut order[i])).collect();
        let mut at_loc = vec![usize::MAX; m];
        // Problem::new proved a matching exists.
        let found = matching(n, &shuffled, &mut at_loc);
        debug_assert!(found.is_ok());
        let mut p = vec![usize::MAX; m];
        for (k, &slot) in at_loc.iter().enumerate() {
            if slot != usize::MAX {
                p[who[slot]] = k;
            }
        }
        let mut free: Vec<usize> = (0..m).filter(|&k| at_loc[k] == usize::MAX).collect();
        shuffle(&mut free, rng);
        p[n..].copy_from_slice(&free);
        p
    }

    /// The objective of a permutation from the search's matrices: O(n²).
    pub(crate) fn objective_of(&self, p: &[usize]) -> f64 {
        let (n, m) = (self.n, self.m);
        let mut s = 0.0;
        for i in 0..n {
            let row = &self.b[p[i] * m..(p[i] + 1) * m];
            let ai = &self.a[i * m..i * m + n];
            for j in 0..n {
                s += ai[j] * row[p[j]];
            }
        }
        for (i, &k) in p.iter().enumerate().take(n) {
            s += self.c[i * m + k];
        }
        s + self.penalty * self.violations(p) as f64
    }

    /// Swap r and s keeps every department on an allowed location.
    #[inline]
    pub(crate) fn swap_allowed(&self, p: &[usize], r: usize, s: usize) -> bool {
        let m = self.m;
        self.allowed[r * m + p[s]] && self.allowed[s * m + p[r]]
    }

    /// Facility i has adjacency rules.
    #[inline]
    pub(crate) fn has_rules_for(&self, i: usize) -> bool {
        self.rule_start[i] != self.rule_start[i + 1]
    }

    /// Whether there are any adjacency rules.
    #[inline]
    pub(crate) fn has_rules(&self) -> bool {
        self.rules > 0
    }

    /// Change in penalty when facilities r and s swap: O(rules of r + rules of s).
    /// A swap moves only r and s, so only their rules can change state (the
    /// rule between r and s, if any, keeps its state: the neighbour relation is symmetric).
    #[inline]
    pub(crate) fn penalty_delta(&self, p: &[usize], r: usize, s: usize) -> f64 {
        let mut change = 0i64;
        for (x, y) in [(r, s), (s, r)] {
            for q in self.rule_start[x]..self.rule_start[x + 1] {
                let j = self.rule_other[q];
                if j == y {
                    continue;
                }
                let want = self.rule_want[q];
                change += self.broken(p[y], p[j], want) as i64 - self.broken(p[x], p[j], want) as i64;
            }
        }
        self.penalty * change as f64
    }

    /// The search objective of a permutation (m entries): cost plus penalties, from scratch.
    pub fn permutation_objective(&self, p: &[usize]) -> f64 {
        self.objective_of(p)
    }

    /// Pairs of facilities a search may swap: both movable and not both placeholders.
    #[inline]
    pub(crate) fn pair_movable(&self, r: usize, s: usize) -> bool {
        (self.all_movable || (self.movable[r] && self.movable[s])) && (r < self.n || s < self.n)
    }
}

/// Fisher–Yates.
pub(crate) fn shuffle(v: &mut [usize], rng: &mut Stream) {
    for i in (1..v.len()).rev() {
        let j = rng.random_range(0..=i);
        v.swap(i, j);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(n: usize, m: usize) -> Spec {
        let flow = (0..n * n).map(|i| (i % 5) as f64).collect();
        let distance = (0..m * m).map(|i| ((i / m) as f64 - (i % m) as f64).abs()).collect();
        Spec::new(n, m, flow, distance)
    }

    #[test]
    fn bad_specs_are_refused_with_clear_messages() {
        let err = |s: Spec| Problem::new(s).unwrap_err();
        assert!(err(spec(5, 4)).contains("5 departments do not fit in 4 locations"));
        let mut s = spec(3, 4);
        s.pinned = vec![(0, 2), (1, 2)];
        assert!(err(s).contains("departments 0 and 1 are both pinned to location 2"));
        let mut s = spec(3, 4);
        s.fixed_cost = Some(vec![0.0; 12]);
        s.fixed_cost.as_mut().unwrap()[4..8].fill(f64::INFINITY);
        assert!(err(s).contains("department 1 may not take any location"));
        let mut s = spec(3, 4);
        s.neighbours = Some(vec![true; 16]);
        s.adjacent = vec![(0, 1)];
        s.apart = vec![(1, 0)];
        assert!(err(s).contains("must be both adjacent and apart"));
        let mut s = spec(3, 4);
        s.adjacent = vec![(0, 1)];
        assert!(err(s).contains("need a neighbour relation"));
        let mut s = spec(3, 3);
        s.keep_empty = vec![1];
        assert!(err(s).contains("no layout gives every department"));
        let mut s = spec(3, 3);
        s.flow[4] = f64::NAN;
        assert!(err(s).contains("flow[1][1] is NaN"));
        let mut s = spec(3, 3);
        s.pinned = vec![(0, 1)];
        s.keep_empty = vec![1];
        assert!(err(s).contains("kept empty"));
    }

    #[test]
    fn random_permutations_respect_pins_and_empty_locations() {
        let mut s = spec(4, 7);
        s.pinned = vec![(2, 5)];
        s.keep_empty = vec![0, 6];
        let q = Problem::new(s).unwrap();
        let mut rng = layflow_engine::stream(1, 0, &[]);
        for _ in 0..50 {
            let p = q.random_permutation(&mut rng);
            let mut sorted = p.clone();
            sorted.sort_unstable();
            assert_eq!(sorted, (0..7).collect::<Vec<_>>());
            assert_eq!(p[2], 5);
            assert!(p[..4].iter().all(|&k| k != 0 && k != 6));
            assert!(q.evaluate(&p[..4]).unwrap().constraints_met);
        }
    }

    #[test]
    fn penalty_outweighs_any_cost_difference() {
        let mut s = spec(3, 3);
        s.neighbours = Some(vec![false, true, false, true, false, true, false, true, false]);
        s.adjacent = vec![(0, 2)];
        let q = Problem::new(s).unwrap();
        let good = q.evaluate(&[0, 2, 1]).unwrap();
        let bad = q.evaluate(&[0, 1, 2]).unwrap();
        assert!(good.constraints_met && good.violations == 0);
        assert_eq!(bad.violations, 1);
        assert!(!bad.constraints_met);
        assert_eq!(bad.objective, bad.cost + q.penalty());
        assert!(q.penalty() > 2.0 * (good.cost - bad.cost).abs());
    }
}
