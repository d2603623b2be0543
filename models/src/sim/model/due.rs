//! Due dates: each lot's (a product's allowance or its trace order's), and its lateness recorded at shipping.

use super::PlantModel;

impl PlantModel<'_> {
    /// When slab entry `id` is due; NaN without a due date (or when the plant has none).
    #[inline]
    pub(super) fn due_of(&self, id: u32) -> f64 {
        if self.plan.due {
            self.due[id as usize]
        } else {
            f64::NAN
        }
    }

    /// A lot of product `p` shipped in the window `lateness` seconds after
    /// its due date (negative: early).
    pub(super) fn record_lateness(&mut self, p: usize, lateness: f64) {
        if let Some(d) = self.due_stats.as_deref_mut() {
            d.all.record(lateness);
            d.product[p].record(lateness);
        }
        if let Some(c) = self.buckets.as_deref_mut() {
            c.late(p, lateness);
        }
    }
}
