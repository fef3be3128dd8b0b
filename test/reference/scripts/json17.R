# A JSON writer that keeps all 17 significant digits, shared by the reference scripts
# (jsonlite 1.8.4's toJSON(digits = NA) prints only 15 significant digits, which would round the
# references). Sourced from the repository root: source(file.path("test", "reference", "scripts", "json17.R")).
json_num <- function(x) ifelse(is.na(x) | is.infinite(x), "null", sprintf("%.17g", x))
json_str <- function(s) {
  s <- gsub("\\\\", "\\\\\\\\", s)
  s <- gsub("\"", "\\\\\"", s)
  s <- gsub("\n", "\\\\n", s)
  paste0("\"", s, "\"")
}
to_json <- function(v, indent = "") {
  inner <- paste0(indent, "  ")
  if (is.null(v)) return("null")
  if (!is.list(v) && length(v) == 0) return("[]")
  if (is.list(v)) {
    if (length(v) == 0) return(if (is.null(names(v))) "[]" else "{}")
    parts <- vapply(v, to_json, "", indent = inner)
    if (!is.null(names(v))) {
      parts <- paste0(json_str(names(v)), ": ", parts)
      return(paste0("{\n", inner, paste(parts, collapse = paste0(",\n", inner)), "\n", indent, "}"))
    }
    return(paste0("[\n", inner, paste(parts, collapse = paste0(",\n", inner)), "\n", indent, "]"))
  }
  enc <- if (is.character(v)) json_str(v)
         else if (is.logical(v)) ifelse(is.na(v), "null", ifelse(v, "true", "false"))
         else json_num(as.numeric(v))
  if (length(v) == 1 && inherits(v, "AsIs")) return(enc)
  paste0("[", paste(enc, collapse = ", "), "]")
}
scalar <- function(x) I(x)
