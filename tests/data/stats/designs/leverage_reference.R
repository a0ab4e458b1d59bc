# Reference leverages and standardized residuals for tests/unit/test_leverage.cpp: R's hatvalues(fit)
# (the diagonal of the hat matrix H = X(X'X)^-X') and rstandard(fit) (the internally studentized
# residual e_i / (s * sqrt(1 - h_ii)), s^2 the residual mean square) of the fixed-effects lm of each design.
#
# Run from this folder with R 4.2.2 and MASS (Debian: r-base-core, r-cran-mass):
#     Rscript leverage_reference.R
# It reads data files already in tests/data/stats (written by designs_reference.R and rcbd_reference.R, or
# copied from the shared reference set) and writes leverage.json: per case the data file, the R call, the
# rows left out as missing plots, and per data row (in file order) the hat value and rstandard, null for a
# row left out and, as R gives NaN, for rstandard where h_ii = 1 (lm.influence rounds h >= 1 - 10 eps to 1).
# Numbers as sprintf("%.17g") (exact doubles).
options(warn = 1)

num <- function(x) if (length(x) == 0 || is.na(x)) "null" else sprintf("%.17g", x)
str <- function(x) paste0('"', gsub('"', '\\\\"', x), '"')
arr <- function(items) paste0("[", paste(unlist(items), collapse = ", "), "]")
obj <- function(kv) paste0("{\n    ", paste0(str(names(kv)), ": ", unlist(kv), collapse = ",\n    "), "\n  }")

# One case: fit `formula` to `data` without the rows `removed` (1-based); values per data row.
leverage_case <- function(name, file, data, formula, r_call, removed = integer(0)) {
  kept <- setdiff(seq_len(nrow(data)), removed)
  fit <- lm(formula, data = data[kept, ])
  h <- rep(NA_real_, nrow(data))
  z <- rep(NA_real_, nrow(data))
  h[kept] <- hatvalues(fit)
  z[kept] <- rstandard(fit)
  obj(list(name = str(name), file = str(file), r_call = str(r_call),
           removed_rows = arr(lapply(removed, function(i) sprintf("%d", i))),
           sigma = num(summary(fit)$sigma),
           hatvalues = arr(lapply(h, num)), rstandard = arr(lapply(z, num))))
}

cases <- list()

# Immer's barley (MASS::immer, 1931): RCBD, 6 locations x 5 varieties; complete, then row 14 (Loc M, Var T)
# missing as in immer_y1_missing.json.
imm <- read.csv("../immer_y1.csv")
imm$Loc <- factor(imm$Loc); imm$Var <- factor(imm$Var)
cases[[length(cases) + 1]] <- leverage_case("immer rcbd", "immer_y1.csv", imm, Y1 ~ Loc + Var,
                                            "lm(Y1 ~ Loc + Var, data = immer)")
cases[[length(cases) + 1]] <- leverage_case("immer rcbd, row 14 missing", "immer_y1.csv", imm, Y1 ~ Loc + Var,
                                            "lm(Y1 ~ Loc + Var, data = immer[-14, ])", removed = 14)

# chickwts (datasets): CRD with unequal replication (10 to 14 chicks per feed).
cw <- read.csv("../r-classic/chickwts/data.csv")
cw$feed <- factor(cw$feed)
cases[[length(cases) + 1]] <- leverage_case("chickwts crd", "r-classic/chickwts/data.csv", cw, weight ~ feed,
                                            "lm(weight ~ feed, data = chickwts)")

# OrchardSprays (datasets): 8 x 8 Latin square.
os <- read.csv("orchardsprays.csv")
os$R <- factor(os$rowpos); os$C <- factor(os$colpos); os$treatment <- factor(os$treatment)
cases[[length(cases) + 1]] <- leverage_case("orchardsprays latin", "designs/orchardsprays.csv", os,
                                            decrease ~ R + C + treatment,
                                            "lm(decrease ~ factor(rowpos) + factor(colpos) + treatment, data = OrchardSprays)")
cases[[length(cases) + 1]] <- leverage_case("orchardsprays latin, rows 5 and 40 missing", "designs/orchardsprays.csv",
                                            os, decrease ~ R + C + treatment,
                                            "lm(decrease ~ factor(rowpos) + factor(colpos) + treatment, data = OrchardSprays[-c(5, 40), ])",
                                            removed = c(5, 40))

# MASS::oats: split plot, whole-plot stratum as the fixed term B:V (the fixed model plotwright fits).
oats <- read.csv("oats.csv")
for (v in c("B", "V", "N")) oats[[v]] <- factor(oats[[v]])
cases[[length(cases) + 1]] <- leverage_case("oats split", "designs/oats.csv", oats, Y ~ B + V + B:V + N + V:N,
                                            "lm(Y ~ B + V + B:V + N + V:N, data = oats)")
cases[[length(cases) + 1]] <- leverage_case("oats split, row 7 missing", "designs/oats.csv", oats,
                                            Y ~ B + V + B:V + N + V:N,
                                            "lm(Y ~ B + V + B:V + N + V:N, data = oats[-7, ])", removed = 7)

# The invented strip-plot trial: both strip strata as fixed terms.
st <- read.csv("strip_invented.csv")
for (v in c("block", "A", "B")) st[[v]] <- factor(st[[v]])
cases[[length(cases) + 1]] <- leverage_case("strip", "designs/strip_invented.csv", st,
                                            y ~ block + A + block:A + B + block:B + A:B,
                                            "lm(y ~ block + A + block:A + B + block:B + A:B, data = strip_invented)")

# The invented augmented trial: every new entry in one plot, so h = 1 and rstandard NaN there.
aug <- read.csv("augmented_invented.csv")
aug$group <- factor(ifelse(grepl("^C", aug$entry), "check", "new"))
aug$check <- factor(ifelse(grepl("^C", aug$entry), aug$entry, "new"))
aug$block <- factor(aug$block); aug$entry <- factor(aug$entry)
cases[[length(cases) + 1]] <- leverage_case("augmented", "designs/augmented_invented.csv", aug,
                                            y ~ block + group + check + entry,
                                            "lm(y ~ block + group + check + entry, data = augmented_invented); group = check/new, check = check label or 'new'")

# The invented alpha-lattice trial, with one plot missing.
al <- read.csv("alpha_invented.csv")
for (v in c("rep", "block", "entry")) al[[v]] <- factor(al[[v]])
cases[[length(cases) + 1]] <- leverage_case("alpha", "designs/alpha_invented.csv", al,
                                            terms(y ~ rep + rep:block + entry, keep.order = TRUE),
                                            "lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE), data = alpha_invented)")
cases[[length(cases) + 1]] <- leverage_case("alpha, row 10 missing", "designs/alpha_invented.csv", al,
                                            terms(y ~ rep + rep:block + entry, keep.order = TRUE),
                                            "lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE), data = alpha_invented[-10, ])",
                                            removed = 10)

writeLines(paste0("{\n  \"r_version\": ", str(R.version.string),
                  ",\n  \"mass_version\": ", str(as.character(packageVersion("MASS"))),
                  ",\n  \"r_calls\": ", str("hatvalues(fit); rstandard(fit)"),
                  ",\n  \"cases\": [\n  ", paste(unlist(cases), collapse = ",\n  "), "\n  ]\n}"),
           "leverage.json")
