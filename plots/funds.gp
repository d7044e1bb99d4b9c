# Audited funds on the risk curve: each fund's own standard deviation drawn
# at its number of holdings and at its effective number (1/HHI), against
# the band of random equal-weight portfolios.  The ranges (zoomed to the
# funds) and the names' places are set after this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale): the fund's positions and its effective holdings 1/HHI"
set ylabel "standard deviation (% a year)"
set logscale x
set xtics (@XTICS@)
floor = @FLOOR@
set key top right
set format y "%g%%"
