# Expected values for tests/unit/test_power.cpp, computed with R's stats package (R 4.2.2).
# Run in this folder: Rscript power_reference.R > power_r422.json
#
# Quantities (as in core/stats/power.hpp, everything in % of the mean):
#   SED = cv * sqrt(2 / r); ncp = d / SED; tc = qt(1 - a/2, df)
#   pairwise power (two-sided, both tails) = pt(tc, df, ncp, lower.tail = FALSE) + pt(-tc, df, ncp)
#   F test: lambda = r * d^2 / (2 * cv^2) (two means d apart, the others midway), df1 = t - 1, df2 = df
#   error df: CRD t * (r - 1), RCBD (t - 1) * (r - 1)
# Independent forms where R has them: power.t.test(strict = TRUE) for the two-sample case (the CRD with
# t = 2, df 2(n - 1)) and power.anova.test for the F test of a CRD (between.var = d^2 / (2 (t - 1)), the
# variance of the group means with divisor t - 1; within.var = cv^2).
num <- function(x) sprintf("%.17g", x)
error_df <- function(design, t, r) if (design == "crd") t * (r - 1) else (t - 1) * (r - 1)
pair_power <- function(design, t, r, cv, d, a) {
  df <- error_df(design, t, r)
  sed <- cv * sqrt(2 / r)
  ncp <- d / sed
  tc <- qt(1 - a / 2, df)
  list(df = df, sed = sed, ncp = ncp, tc = tc, lsd = tc * sed,
       power = pt(tc, df, ncp, lower.tail = FALSE) + pt(-tc, df, ncp))
}
f_power <- function(design, t, r, cv, d, a) {
  df2 <- error_df(design, t, r)
  lambda <- r * d^2 / (2 * cv^2)
  fc <- qf(1 - a, t - 1, df2)
  list(df1 = t - 1, df2 = df2, lambda = lambda, fc = fc,
       power = pf(fc, t - 1, df2, ncp = lambda, lower.tail = FALSE))
}
obj <- function(...) {
  x <- list(...)
  paste0("{", paste0('"', names(x), '": ', unlist(x), collapse = ", "), "}")
}
str <- function(s) paste0('"', s, '"')

cases <- list(
  list("crd", 2, 4, 10, 15, 0.05), list("crd", 2, 9, 10, 15, 0.05), list("crd", 2, 20, 10, 10, 0.05),
  list("crd", 2, 6, 12, 20, 0.01), list("crd", 2, 3, 8, 30, 0.10),
  list("crd", 5, 4, 10, 15, 0.05), list("crd", 3, 6, 20, 25, 0.05), list("crd", 8, 3, 6, 10, 0.01),
  list("rcbd", 4, 5, 10, 15, 0.05), list("rcbd", 6, 3, 12, 20, 0.05), list("rcbd", 10, 4, 8, 10, 0.01),
  list("rcbd", 3, 8, 15, 20, 0.10), list("rcbd", 2, 6, 10, 15, 0.05), list("rcbd", 12, 2, 5, 15, 0.05))

rows <- character()
for (k in cases) {
  design <- k[[1]]; t <- k[[2]]; r <- k[[3]]; cv <- k[[4]]; d <- k[[5]]; a <- k[[6]]
  p <- pair_power(design, t, r, cv, d, a)
  f <- f_power(design, t, r, cv, d, a)
  extra <- list()
  if (design == "crd" && t == 2)
    extra$power_t_test_strict <- num(power.t.test(n = r, delta = d, sd = cv, sig.level = a, strict = TRUE)$power)
  if (design == "crd")
    extra$power_anova_test <- num(power.anova.test(groups = t, n = r, between.var = d^2 / (2 * (t - 1)),
                                                   within.var = cv^2, sig.level = a)$power)
  fields <- c(list(design = str(design), treatments = t, replicates = r, cv = num(cv), difference = num(d),
                   alpha = num(a), error_df = p$df, sed = num(p$sed), t_ncp = num(p$ncp), t_critical = num(p$tc),
                   lsd = num(p$lsd), t_power = num(p$power), f_df1 = f$df1, f_df2 = f$df2,
                   f_ncp = num(f$lambda), f_critical = num(f$fc), f_power = num(f$power)), extra)
  rows <- c(rows, do.call(obj, fields))
}

# Smallest r (2, 3, ...) whose pairwise power reaches the target, by the same pt formula.
plans <- list(
  list("crd", 2, 10, 15, 0.05, 0.8), list("rcbd", 4, 10, 15, 0.05, 0.8), list("rcbd", 6, 12, 10, 0.05, 0.9),
  list("rcbd", 8, 5, 10, 0.05, 0.8), list("crd", 5, 15, 20, 0.01, 0.8), list("rcbd", 4, 10, 5, 0.05, 0.8),
  list("rcbd", 3, 20, 5, 0.05, 0.8), list("crd", 2, 10, 10, 0.05, 0.8))
prow <- character()
for (k in plans) {
  design <- k[[1]]; t <- k[[2]]; cv <- k[[3]]; d <- k[[4]]; a <- k[[5]]; target <- k[[6]]
  r <- 2
  while (pair_power(design, t, r, cv, d, a)$power < target) r <- r + 1
  fields <- list(design = str(design), treatments = t, cv = num(cv), difference = num(d), alpha = num(a),
                 power = num(target), replicates = r,
                 power_at_replicates = num(pair_power(design, t, r, cv, d, a)$power),
                 power_below = num(pair_power(design, t, r - 1, cv, d, a)$power),
                 f_power_at_replicates = num(f_power(design, t, r, cv, d, a)$power))
  if (design == "crd" && t == 2)
    fields$power_t_test_n_strict <- num(power.t.test(delta = d, sd = cv, sig.level = a, power = target,
                                                     strict = TRUE)$n)
  prow <- c(prow, do.call(obj, fields))
}

cat("{\n")
cat('"generated_by": ', str(R.version.string), ",\n", sep = "")
cat('"script": "tests/data/power/power_reference.R",\n')
cat('"power_at_replicates": [\n  ', paste(rows, collapse = ",\n  "), "\n],\n", sep = "")
cat('"replicates_needed": [\n  ', paste(prow, collapse = ",\n  "), "\n]\n", sep = "")
cat("}\n")
