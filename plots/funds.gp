# Audited funds on the risk curve: each fund's own standard deviation drawn
# at its number of holdings and at its effective number (1/HHI).
set title "@TITLE@\n@BASIS@"
set xlabel "holding count N (log scale): fund's positions (square) and effective holdings 1/HHI (diamond)"
set ylabel "standard deviation (% a year)"
set logscale x
set xrange [@XMIN@:@XMAX@]
set xtics (@XTICS@)
floor = @FLOOR@
set key top right
set yrange [@YMIN@:*]
set format y "%.0f%%"
