#!/usr/bin/Rscript
# Reference uniquenesses from R's stats::factanal (maximum-likelihood factor analysis, optimised by L-BFGS-B over
# the uniquenesses with lower bound 0.005) on R's published datasets:
#   ability.cov  — six ability tests, n.obs = 112 (Smith & Stanley 1983, via R's datasets package);
#   Harman74.cor — 24 psychological tests, n.obs = 145 (Harman 1976, "Modern Factor Analysis", Table 7.4).
# Run:  /usr/bin/Rscript tests/reference/generate_factanal.R
# Writes tests/reference/fixtures/engine_factanal.json (written by hand: no JSON package needed).
args <- commandArgs(trailingOnly = FALSE)
file_arg <- sub("^--file=", "", args[grep("^--file=", args)])
here <- if (length(file_arg)) dirname(normalizePath(file_arg)) else "tests/reference"
out <- file.path(here, "fixtures", "engine_factanal.json")

num <- function(x) paste0("[", paste(formatC(as.numeric(x), digits = 17, format = "g"), collapse = ","), "]")

case_json <- function(name, covmat, n_obs, factors) {
  fits <- sapply(factors, function(k) {
    fa <- factanal(factors = k, covmat = covmat, n.obs = n_obs, rotation = "none",
                   control = list(opt = list(maxit = 10000, factr = 1)))
    sprintf('{"factors":%d,"uniquenesses":%s,"objective":%s,"converged":%s}', k, num(fa$uniquenesses),
            num(fa$criteria["objective"]), tolower(as.character(fa$converged)))
  })
  sprintf('{"name":"%s","nObs":%d,"variables":%d,"covariance":%s,"fits":[%s]}', name, n_obs, ncol(covmat),
          num(covmat), paste(fits, collapse = ","))
}

ability <- ability.cov$cov
harman <- Harman74.cor$cov
json <- sprintf('{"generator":"tests/reference/generate_factanal.R","r":"%s","cases":[%s,%s]}', R.version.string,
                case_json("ability.cov", ability, ability.cov$n.obs, c(1, 2)),
                case_json("Harman74.cor", harman, Harman74.cor$n.obs, c(1, 4, 5)))
writeLines(json, out)
cat("wrote", out, "\n")
