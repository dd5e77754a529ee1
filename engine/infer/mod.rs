//! Starting-value inference: model structure matched to data features, with
//! the derivation of every value.
