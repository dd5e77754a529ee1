//! Declarative knowledge loaded from `rules/` (YAML): model library,
//! transforms, rewrite rules and neutral values.
