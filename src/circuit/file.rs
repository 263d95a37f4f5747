//! placeholder
/// The valid name nearest to `key` by edit distance, if it is close enough to be a likely slip.
pub fn nearest<'k>(key: &str, valid: &[&'k str]) -> Option<&'k str> {
    let _ = (key, valid);
    None
}
