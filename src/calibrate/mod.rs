//! Corrections fitted on imported results: robust linear maps and ridge models, grouped
//! cross-validation, split-conformal intervals, applicability domain, next-batch suggestion
//! (issue 6).
