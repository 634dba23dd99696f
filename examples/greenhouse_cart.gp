# Renders the greenhouse cart demo's CSV: position error with its ±3σ band, and the UWB NIS with the gate.
# Usage: gnuplot -e "csv='greenhouse_cart.csv'" -e "png='greenhouse_cart.png'" greenhouse_cart.gp
if (!exists("csv")) csv = 'greenhouse_cart.csv'
if (!exists("png")) png = 'greenhouse_cart.png'
set datafile separator ','
set terminal pngcairo size 1000,700 noenhanced
set output png
set multiplot layout 2,1 title 'greenhouse cart: linear Kalman filter, encoder + UWB range'
set key top right
set ylabel 'position error (m)'
set yrange [-0.4:0.4]
plot csv every ::1 using 1:($4-$2) with lines lw 1 title 'estimate - truth', \
     '' every ::1 using 1:(3*$6) with lines lc rgb 'gray' title '+3 sigma', \
     '' every ::1 using 1:(-3*$6) with lines lc rgb 'gray' title '-3 sigma'
set ylabel 'UWB NIS'
set autoscale y
set key bottom right opaque
set xlabel 'time (s)'
set logscale y
gate = 10.828
plot csv every ::1 using 1:($9==0 ? $8 : 1/0) with points pt 7 ps 0.3 title 'accepted', \
     '' every ::1 using 1:($9==1 ? $8 : 1/0) with points pt 7 ps 0.6 lc rgb 'red' title 'gated (NLOS)', \
     gate with lines dt 2 lc rgb 'black' title 'gate chi2(1, 0.999)'
unset multiplot
