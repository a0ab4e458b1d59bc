# Reference values for the analysis of every design (tests/unit/test_analysis_designs.cpp,
# tests/unit/test_studentized_range.cpp).
#
# Run from this folder with R 4.2.2 and the recommended package MASS (Debian: r-base-core, r-cran-mass):
#     Rscript designs_reference.R
# It writes, for each case, NAME.csv (the data) and NAME.json (R's results, with the R call that made
# them), numbers as sprintf("%.17g") (exact doubles). Classic data sets come with R; three invented trials
# (strip-plot, augmented, alpha-lattice) are drawn here from R's generator with a fixed seed and rounded
# to one decimal, so that the CSV is the data and R's analysis of it the reference.
suppressPackageStartupMessages(library(MASS))
options(warn = 1)

num <- function(x) if (length(x) == 0 || is.na(x)) "null" else sprintf("%.17g", x)
str <- function(x) paste0('"', gsub('"', '\\\\"', x), '"')
obj <- function(kv) paste0("{", paste0(str(names(kv)), ": ", unlist(kv), collapse = ", "), "}")
arr <- function(items) paste0("[\n    ", paste(unlist(items), collapse = ",\n    "), "\n  ]")
write_json <- function(path, fields) {
  body <- paste0("  ", str(names(fields)), ": ", unlist(fields), collapse = ",\n")
  writeLines(paste0("{\n", body, "\n}"), path)
}
versions <- list(r_version = str(R.version.string), mass_version = str(as.character(packageVersion("MASS"))))

# Rows of an anova table (sequential SS) as JSON objects; the residual row is named "Residuals".
rows_of <- function(a) {
  lapply(seq_len(nrow(a)), function(i) {
    obj(list(term = str(trimws(rownames(a)[i])), df = num(a$Df[i]), ss = num(a$`Sum Sq`[i]),
             ms = num(a$`Mean Sq`[i]), f = num(a$`F value`[i]), p = num(a$`Pr(>F)`[i])))
  })
}
named <- function(v) obj(setNames(lapply(as.numeric(v), num), names(v)))

# Least-squares means: predictions averaged over the observed combinations of the nuisance columns.
ls_means <- function(fit, data, nuisance, trt, structure = trt) {
  combos <- unique(data[, nuisance, drop = FALSE])
  levels_t <- unique(data[, structure, drop = FALSE])
  out <- sapply(seq_len(nrow(levels_t)), function(j) {
    g <- combos
    for (s in structure) g[[s]] <- levels_t[[s]][j]
    for (col in names(data)) if (is.factor(data[[col]]) && col %in% names(g)) {
      g[[col]] <- factor(g[[col]], levels = levels(data[[col]]))
    }
    mean(suppressWarnings(predict(fit, newdata = g)))
  })
  setNames(out, as.character(levels_t[[trt]]))
}

tukey_rows <- function(tk) {
  lapply(seq_len(nrow(tk)), function(i) {
    obj(list(comparison = str(rownames(tk)[i]), diff = num(tk[i, "diff"]), lwr = num(tk[i, "lwr"]),
             upr = num(tk[i, "upr"]), p_adj = num(tk[i, "p adj"])))
  })
}

# Adjusted SS of a term: deviance without it (and without the terms containing it) minus with it.
adjusted_ss <- function(data, without, with) {
  d0 <- deviance(lm(without, data = data))
  d1 <- deviance(lm(with, data = data))
  d0 - d1
}

# ---- npk (datasets): 2^3 factorial in 6 blocks of 4, N:P:K confounded with blocks ----------------------
write.csv(data.frame(block = npk$block, N = paste0("N", npk$N), P = paste0("P", npk$P), K = paste0("K", npk$K),
                     yield = npk$yield), "npk.csv", row.names = FALSE)
call <- "anova(lm(yield ~ block + N*P*K, data = npk))"
fit <- lm(yield ~ block + N * P * K, data = npk)
miss <- npk[-c(3, 17), ]
fit_m <- lm(yield ~ block + N * P * K, data = miss)
write_json("npk.json", c(list(dataset = str("datasets::npk"), r_call = str(call)), versions, list(
  anova = arr(rows_of(anova(fit))),
  aliased = arr(list(str(names(which(is.na(coef(fit))))))),
  means_N = named(tapply(npk$yield, npk$N, mean)),
  means_NP = named(tapply(npk$yield, paste(npk$N, npk$P), mean)),
  missing_r_call = str("anova(lm(yield ~ block + N*P*K, data = npk[-c(3, 17), ])); block adjusted: deviance(lm(yield ~ N*P*K)) - deviance(full)"),
  missing_anova = arr(rows_of(anova(fit_m))),
  missing_block_adjusted_ss = num(adjusted_ss(miss, yield ~ N * P * K, yield ~ block + N * P * K)),
  missing_N_adjusted_ss = num(adjusted_ss(miss, yield ~ block + P + K + P:K, yield ~ block + N + P + K + P:K)),
  missing_prediction_row3 = num(suppressWarnings(predict(fit_m, newdata = npk[3, ]))),
  missing_means_N = named(sapply(levels(npk$N), function(l) {
    g <- expand.grid(block = levels(npk$block), N = l, P = levels(npk$P), K = levels(npk$K))
    mean(suppressWarnings(predict(fit_m, newdata = g)))
  })))))

# ---- MASS::oats: split plot, varieties (V) on main plots, nitrogen (N) on subplots, 6 blocks (B) -------
write.csv(data.frame(B = oats$B, V = oats$V, N = oats$N, Y = oats$Y), "oats.csv", row.names = FALSE)
call <- "summary(aov(Y ~ V * N + Error(B/V), data = oats))"
s <- summary(aov(Y ~ V * N + Error(B / V), data = oats))
strat <- function(name) rows_of(s[[name]][[1]])
write_json("oats.json", c(list(dataset = str("MASS::oats"), r_call = str(call)), versions, list(
  stratum_B = arr(strat("Error: B")), stratum_BV = arr(strat("Error: B:V")),
  stratum_within = arr(strat("Error: Within")),
  means_V = named(tapply(oats$Y, oats$V, mean)), means_N = named(tapply(oats$Y, oats$N, mean)),
  means_VN = named(tapply(oats$Y, paste(oats$V, oats$N, sep = " x "), mean)),
  grand_mean = num(mean(oats$Y)))))

# ---- OrchardSprays (datasets): 8 x 8 Latin square, rows rowpos, columns colpos -------------------------
write.csv(OrchardSprays[, c("rowpos", "colpos", "treatment", "decrease")], "orchardsprays.csv", row.names = FALSE)
call <- "anova(lm(decrease ~ factor(rowpos) + factor(colpos) + treatment, data = OrchardSprays)); TukeyHSD(aov(...), \"treatment\")"
os <- OrchardSprays
os$R <- factor(os$rowpos)
os$C <- factor(os$colpos)
a <- aov(decrease ~ R + C + treatment, data = os)
write_json("orchardsprays.json", c(list(dataset = str("datasets::OrchardSprays"), r_call = str(call)), versions, list(
  anova = arr(rows_of(anova(lm(decrease ~ R + C + treatment, data = os)))),
  means = named(tapply(os$decrease, os$treatment, mean)),
  tukey = arr(tukey_rows(TukeyHSD(a, "treatment")$treatment)),
  q_095 = num(qtukey(0.95, 8, 42)))))

# ---- An invented strip-plot trial: 3 blocks, tillage (A, 3 strips) x herbicide (B, 4 strips) ------------
set.seed(20260614)
st <- expand.grid(B = 1:4, A = 1:3, block = 1:3)
st$block <- paste0("R", st$block); st$A <- paste0("T", st$A); st$B <- paste0("H", st$B)
st$y <- round(50 + 3 * as.integer(factor(st$A)) + 2 * as.integer(factor(st$B)) +
              rnorm(3)[as.integer(factor(st$block))] + rnorm(9)[as.integer(factor(paste(st$block, st$A)))] +
              rnorm(12)[as.integer(factor(paste(st$block, st$B)))] + rnorm(nrow(st)), 1)
write.csv(st[, c("block", "A", "B", "y")], "strip_invented.csv", row.names = FALSE)
stf <- data.frame(block = factor(st$block), A = factor(st$A), B = factor(st$B), y = st$y)
call <- "summary(aov(y ~ A * B + Error(block/(A * B)), data = strip_invented))"
s <- summary(aov(y ~ A * B + Error(block / (A * B)), data = stf))
write_json("strip_invented.json", c(list(dataset = str("invented: set.seed(20260614), see designs_reference.R"),
                                         r_call = str(call)), versions, list(
  stratum_block = arr(rows_of(s[["Error: block"]][[1]])), stratum_blockA = arr(rows_of(s[["Error: block:A"]][[1]])),
  stratum_blockB = arr(rows_of(s[["Error: block:B"]][[1]])),
  stratum_within = arr(rows_of(s[["Error: block:A:B"]][[1]])),
  means_A = named(tapply(stf$y, stf$A, mean)), means_B = named(tapply(stf$y, stf$B, mean)))))

# ---- An invented augmented trial: 4 blocks, checks C1-C3 in every block, 12 new entries, 3 per block ----
set.seed(7)
aug <- do.call(rbind, lapply(1:4, function(b) {
  e <- c("C1", "C2", "C3", paste0("N", (b - 1) * 3 + 1:3))
  data.frame(block = paste0("B", b), entry = sample(e))
}))
aug$y <- round(20 + c(B1 = 0, B2 = 2, B3 = -1, B4 = 3)[aug$block] + rnorm(nrow(aug), sd = 1.5) +
               ifelse(grepl("^C", aug$entry), c(C1 = 1, C2 = 0, C3 = 2)[aug$entry], 0), 1)
write.csv(aug, "augmented_invented.csv", row.names = FALSE)
af <- data.frame(block = factor(aug$block), entry = factor(aug$entry), y = aug$y)
af$group <- factor(ifelse(grepl("^C", aug$entry), "check", "new"))
af$check <- factor(ifelse(grepl("^C", aug$entry), aug$entry, "new"))
call <- "anova(lm(y ~ block + group + check + entry, data = augmented_invented)); group = check/new, check = check label or 'new'"
fit <- lm(y ~ block + group + check + entry, data = af)
write_json("augmented_invented.json", c(list(dataset = str("invented: set.seed(7), see designs_reference.R"),
                                             r_call = str(call)), versions, list(
  anova = arr(rows_of(anova(fit))),
  block_adjusted_ss = num(adjusted_ss(af, y ~ group + check + entry, y ~ block + group + check + entry)),
  adjusted_means = named(ls_means(fit, af, "block", "entry", c("entry", "group", "check"))),
  grand_mean = num(mean(af$y)))))

# ---- An invented alpha-lattice trial: 12 entries, 3 replicates of 3 incomplete blocks of 4 -------------
blocks <- list(c(1, 2, 3, 4), c(5, 6, 7, 8), c(9, 10, 11, 12),
               c(1, 5, 9, 2), c(6, 10, 3, 7), c(11, 4, 8, 12),
               c(1, 6, 11, 4), c(5, 10, 3, 8), c(9, 2, 7, 12))
set.seed(11)
al <- do.call(rbind, lapply(seq_along(blocks), function(i) {
  data.frame(rep = paste0("R", (i - 1) %/% 3 + 1), block = paste0("b", (i - 1) %% 3 + 1),
             entry = paste0("E", sprintf("%02d", blocks[[i]])))
}))
al$y <- round(40 + rnorm(12, sd = 2)[as.integer(factor(al$entry))] + rnorm(3)[as.integer(factor(al$rep))] +
              rnorm(9, sd = 1.5)[as.integer(factor(paste(al$rep, al$block)))] + rnorm(nrow(al)), 1)
write.csv(al, "alpha_invented.csv", row.names = FALSE)
alf <- data.frame(rep = factor(al$rep), block = factor(al$block), entry = factor(al$entry), y = al$y)
call <- "anova(lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE), data = alpha_invented))"
fit <- lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE), data = alf)
write_json("alpha_invented.json", c(list(dataset = str("invented: set.seed(11), see designs_reference.R"),
                                         r_call = str(call)), versions, list(
  anova = arr(rows_of(anova(fit))),
  block_adjusted_ss = num(adjusted_ss(alf, y ~ rep + entry, y ~ rep + rep:block + entry)),
  adjusted_means = named(ls_means(fit, alf, c("rep", "block"), "entry")),
  grand_mean = num(mean(alf$y)))))

# ---- The studentized range distribution: R's ptukey and qtukey -----------------------------------------
cases <- expand.grid(k = c(2, 3, 5, 10, 20), df = c(2, 5, 10, 30, 120, 1000))
pt_rows <- lapply(seq_len(nrow(cases)), function(i) {
  k <- cases$k[i]; df <- cases$df[i]
  q <- c(1, 3, 5)
  obj(list(k = num(k), df = num(df), q = arr(lapply(q, num)), ptukey = arr(lapply(ptukey(q, k, df), num)),
           qtukey_095 = num(qtukey(0.95, k, df)), qtukey_099 = num(qtukey(0.99, k, df))))
})
write_json("studentized_range.json", c(list(r_call = str("ptukey(q, k, df); qtukey(0.95, k, df); qtukey(0.99, k, df)")),
                                       versions, list(cases = arr(pt_rows))))
