# Renders the parcel drone demo's CSV: altitude error with its ±3σ band, and the lidar NIS with the gate.
# Usage: gnuplot -e "csv='parcel_drone_altitude.csv'" -e "png='parcel_drone_altitude.png'" parcel_drone_altitude.gp
if (!exists("csv")) csv = 'parcel_drone_altitude.csv'
if (!exists("png")) png = 'parcel_drone_altitude.png'
set datafile separator ','
set terminal pngcairo size 1000,700 noenhanced
set output png
set multiplot layout 2,1 title 'parcel drone altitude: float32 UD filter, accelerometer + barometer + lidar by timestamp'
set key top right
set ylabel 'altitude error (m)'
set yrange [-0.2:0.2]
plot csv every ::1 using 1:($3-$2) with lines lw 1 title 'estimate - truth', \
     '' every ::1 using 1:(3*$4) with lines lc rgb 'gray' title '+3 sigma', \
     '' every ::1 using 1:(-3*$4) with lines lc rgb 'gray' title '-3 sigma'
set ylabel 'lidar NIS'
set autoscale y
set key bottom right opaque
set xlabel 'time (s)'
set logscale y
set format y '%g'
gate = 10.828
plot csv every ::1 using 1:($9==0 ? $8 : 1/0) with points pt 7 ps 0.4 title 'accepted', \
     '' every ::1 using 1:($9==1 ? $8 : 1/0) with points pt 7 ps 0.7 lc rgb 'red' title 'gated (spike)', \
     gate with lines dt 2 lc rgb 'black' title 'gate chi2(1, 0.999)'
unset multiplot
