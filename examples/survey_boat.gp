# Renders the survey boat demo's CSV: the track seen from above (truth, fixes, gated fixes, EKF, UKF) and the
# east position error of both filters with the EKF's ±3σ band.
# Usage: gnuplot -e "csv='survey_boat.csv'" -e "png='survey_boat.png'" survey_boat.gp
if (!exists("csv")) csv = 'survey_boat.csv'
if (!exists("png")) png = 'survey_boat.png'
set datafile separator ','
set terminal pngcairo size 1000,800 noenhanced
set output png
set multiplot layout 2,1 title 'survey boat: EKF and UKF, compass 5 Hz + GNSS 1 Hz with multipath outliers gated'
set key outside right
set size ratio -1
set xlabel 'east (m)'
set ylabel 'north (m)'
plot csv every ::1 using 5:($15==0 ? $6 : 1/0) with points pt 7 ps 0.3 lc rgb '#b0b0b0' title 'fix', \
     '' every ::1 using 5:($15==1 ? $6 : 1/0) with points pt 2 ps 1 lc rgb 'red' title 'gated fix', \
     '' every ::1 using 2:3 with lines lw 2 lc rgb 'black' title 'truth', \
     '' every ::1 using 7:8 with lines lc rgb '#1f77b4' title 'EKF', \
     '' every ::1 using 9:10 with lines dt 2 lc rgb '#d62728' title 'UKF'
set size noratio
set key inside top right opaque
set xlabel 'time (s)'
set ylabel 'east error (m)'
set yrange [-4:4]
plot csv every ::1 using 1:($7-$2) with lines lc rgb '#1f77b4' title 'EKF - truth', \
     '' every ::1 using 1:($9-$2) with lines dt 2 lc rgb '#d62728' title 'UKF - truth', \
     '' every ::1 using 1:(3*$11) with lines lc rgb 'gray' title 'EKF +-3 sigma', \
     '' every ::1 using 1:(-3*$11) with lines lc rgb 'gray' notitle
unset multiplot
