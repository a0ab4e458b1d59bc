# Reference values for the RCBD analysis tests (tests/unit/test_anova_rcbd.cpp, test_distributions.cpp).
#
# Run from this folder with R 4.2.2 and the recommended package MASS:
#     Rscript rcbd_reference.R
# It rewrites immer_y1.csv, immer_y1_rcbd.json, immer_y1_missing.json, sleep_rcbd_extra.json,
# yates_hand_exact.json and distributions_extra.json. Numbers are written with sprintf("%.17g"), which
# round-trips a double exactly, so the files hold R's results to the last bit.
suppressPackageStartupMessages(library(MASS))

num <- function(x) if (is.na(x)) "null" else sprintf("%.17g", x)
str <- function(x) paste0('"', gsub('"', '\\\\"', x), '"')
obj <- function(...) {
  kv <- list(...)
  paste0("{", paste0(str(names(kv)), ": ", unlist(kv), collapse = ", "), "}")
}
arr <- function(items) paste0("[\n    ", paste(items, collapse = ",\n    "), "\n  ]")
named_nums <- function(v) obj_list(setNames(lapply(v, num), names(v)))
obj_list <- function(kv) paste0("{", paste0(str(names(kv)), ": ", unlist(kv), collapse = ", "), "}")
write_json <- function(path, fields) {
  body <- paste0("  ", str(names(fields)), ": ", unlist(fields), collapse = ",\n")
  writeLines(paste0("{\n", body, "\n}"), path)
}
versions <- list(r_version = str(R.version.string),
                 mass_version = str(as.character(packageVersion("MASS"))))

# Sequential ANOVA rows (blocks first, then treatments) plus the total about the observed mean.
anova_rows <- function(fit, y) {
  a <- anova(fit)
  rows <- lapply(seq_len(nrow(a)), function(i) {
    obj(term = str(rownames(a)[i]), df = num(a$Df[i]), ss = num(a$`Sum Sq`[i]),
        ms = num(a$`Mean Sq`[i]), f = num(a$`F value`[i]), p = num(a$`Pr(>F)`[i]))
  })
  rows[[length(rows) + 1]] <- obj(term = str("Total"), df = num(length(y) - 1),
                                  ss = num(sum((y - mean(y))^2)))
  arr(rows)
}

# Least-squares means of an additive block + treatment fit: the average over blocks of the fitted
# cell values, so each treatment is compared in every block.
ls_means <- function(fit, blocks, treatments) {
  grid <- expand.grid(Loc = blocks, Var = treatments)
  grid$fit <- predict(fit, newdata = grid)
  tapply(grid$fit, grid$Var, mean)
}

# ---- MASS::immer, 1931 yield, locations as blocks, varieties as treatments ---------------------------
imm <- immer[, c("Loc", "Var", "Y1")]
write.csv(data.frame(Loc = as.character(imm$Loc), Var = as.character(imm$Var), Y1 = imm$Y1),
          "immer_y1.csv", row.names = FALSE)

r_call <- "aov(Y1 ~ Loc + Var, data = immer)"
fit <- aov(Y1 ~ Loc + Var, data = imm)
tab <- summary(fit)[[1]]
mse <- tab$`Mean Sq`[3]
edf <- tab$Df[3]
r <- nlevels(imm$Loc)
sed <- sqrt(2 * mse / r)
write_json("immer_y1_rcbd.json", c(
  list(dataset = str("MASS::immer, columns Loc, Var, Y1"), r_call = str(r_call)), versions,
  list(anova = anova_rows(lm(Y1 ~ Loc + Var, data = imm), imm$Y1),
       grand_mean = num(mean(imm$Y1)),
       cv_percent = num(100 * sqrt(mse) / mean(imm$Y1)),
       sed = num(sed),
       lsd_5pct = num(qt(0.975, edf) * sed),
       lsd_r_call = str("qt(0.975, residual df) * sqrt(2 * residual MS / 6)"),
       treatment_means = named_nums(tapply(imm$Y1, imm$Var, mean)))))

# Missing plots: rows removed, the rest fitted by least squares with Loc first (sequential SS), so
# the Var row is the block-adjusted treatment SS. The prediction for a removed cell is the value
# Yates' formula (iterated when several) converges to.
missing_case <- function(rows) {
  obs <- imm[-rows, ]
  f <- lm(Y1 ~ Loc + Var, data = obs)
  lsm <- ls_means(f, levels(imm$Loc), levels(imm$Var))
  removed <- lapply(rows, function(i) {
    obj(Loc = str(as.character(imm$Loc[i])), Var = str(as.character(imm$Var[i])),
        y_removed = num(imm$Y1[i]),
        lm_prediction = num(predict(f, newdata = imm[i, c("Loc", "Var")])))
  })
  mse <- sum(residuals(f)^2) / f$df.residual
  obj(r_call = str(sprintf("anova(lm(Y1 ~ Loc + Var, data = immer[-c(%s), ]))",
                           paste(rows, collapse = ", "))),
      removed = arr(removed),
      anova = anova_rows(f, obs$Y1),
      ls_means = named_nums(lsm),
      ls_means_r_call = str("mean over the 6 locations of predict(fit, expand.grid(Loc, Var))"),
      grand_mean_of_ls_means = num(mean(lsm)),
      cv_percent = num(100 * sqrt(mse) / mean(lsm)),
      sed_no_missing = num(sqrt(2 * mse / r)),
      lsd_5pct = num(qt(0.975, f$df.residual) * sqrt(2 * mse / r)))
}
write_json("immer_y1_missing.json", c(versions, list(cases = arr(list(
  missing_case(14),          # Loc M, Var T
  missing_case(c(2, 23)),    # Loc UF Var S, and Loc GR Var V
  missing_case(c(3, 8, 9))   # Loc UF Var V, Loc W Var V, Loc W Var T
)))))

# ---- sleep as an RCBD (subjects as blocks): the quantities beyond the ANOVA table ---------------------
s <- aov(extra ~ ID + group, data = sleep)
st <- summary(s)[[1]]
smse <- st$`Mean Sq`[3]
write_json("sleep_rcbd_extra.json", c(
  list(r_call = str("aov(extra ~ ID + group, data = sleep)")), versions,
  list(total_ss = num(sum((sleep$extra - mean(sleep$extra))^2)),
       grand_mean = num(mean(sleep$extra)),
       cv_percent = num(100 * sqrt(smse) / mean(sleep$extra)),
       sed = num(sqrt(2 * smse / 10)),
       lsd_5pct = num(qt(0.975, st$Df[3]) * sqrt(2 * smse / 10)),
       treatment_means = named_nums(tapply(sleep$extra, sleep$group, mean)))))

# ---- Yates' hand example (4 treatments x 3 blocks, treatment 4 missing in block 3) --------------------
hand <- data.frame(blk = factor(rep(1:3, each = 4)), trt = factor(rep(1:4, 3)),
                   y = c(20, 24, 28, 22, 18, 23, 27, 21, 22, 26, 30, NA))
obs <- hand[!is.na(hand$y), ]
hf <- lm(y ~ blk + trt, data = obs)
aug <- hand
x <- predict(hf, newdata = hand[12, ])
aug$y[12] <- x
augt <- summary(aov(y ~ blk + trt, data = aug))[[1]]
B <- sum(obs$y[obs$blk == 3]); t <- 4
write_json("yates_hand_exact.json", c(
  list(r_call = str("anova(lm(y ~ blk + trt)) on the 11 observed plots")), versions,
  list(anova = anova_rows(hf, obs$y),
       lm_prediction = num(x),
       augmented_treatment_ss = num(augt$`Sum Sq`[2]),
       augmented_residual_ss = num(augt$`Sum Sq`[3]),
       yates_bias = num((B - (t - 1) * x)^2 / (t * (t - 1))))))

# ---- F upper tails and t quantiles beyond the tables ---------------------------------------------------
ft <- data.frame(f = c(8.53084606345476, 16.5008813160987, 1, 0.25, 3.49, 40, 250),
                 df1 = c(9, 1, 4, 3, 3, 5, 2), df2 = c(9, 9, 20, 12, 12, 24, 7))
tq <- data.frame(p = c(0.975, 0.995, 0.9, 0.6, 0.025, 0.5, 0.9995), df = c(20, 5, 3, 40, 12, 7, 2.5))
write_json("distributions_extra.json", c(versions, list(
  f_upper_tail = arr(mapply(function(f, a, b)
    obj(f = num(f), df1 = num(a), df2 = num(b), p = num(pf(f, a, b, lower.tail = FALSE))),
    ft$f, ft$df1, ft$df2)),
  f_upper_tail_r_call = str("pf(f, df1, df2, lower.tail = FALSE)"),
  t_quantile = arr(mapply(function(p, d) obj(p = num(p), df = num(d), q = num(qt(p, d))), tq$p, tq$df)),
  t_quantile_r_call = str("qt(p, df)"))))
