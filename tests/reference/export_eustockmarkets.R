# Exports R's datasets::EuStockMarkets (daily closing prices of the DAX, SMI, CAC and FTSE indices, 1991–1998;
# R Core Team, "datasets" package, data from Erste Bank AG, Vienna) to a wide CSV fixture for Loadline's import.
#
# The series is a ts with frequency 260 starting at 1991(130) and carries no calendar dates: this script gives
# the observations consecutive weekdays starting Monday 1991-07-01 (the published series skips weekends and
# holidays alike, so the dates are approximate; only their order matters for the returns).
#
# Run: /usr/bin/Rscript tests/reference/export_eustockmarkets.R
args <- commandArgs(trailingOnly = FALSE)
script <- sub("^--file=", "", args[grep("^--file=", args)])
out <- file.path(dirname(normalizePath(script)), "..", "fixtures", "imports", "eustockmarkets.csv")

prices <- as.matrix(datasets::EuStockMarkets)
n <- nrow(prices)
days <- seq(as.Date("1991-07-01"), by = "day", length.out = n * 2)
weekdays_only <- days[as.POSIXlt(days)$wday %in% 1:5][seq_len(n)]
frame <- data.frame(date = format(weekdays_only, "%Y-%m-%d"), prices, check.names = FALSE)
# 17 significant digits: every double written exactly.
write.csv(format(frame, digits = 17), out, row.names = FALSE, quote = FALSE)
cat(sprintf("wrote %d rows x %d series to %s\n", n, ncol(prices), normalizePath(out)))
