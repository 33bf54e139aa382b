import { readObservationCsv } from '../server/engine/io/csv'
const t = '\ufeffKind,AT,from,To,Value,unit,sigma,hi,ht,set,length,note,extra\r\n# comment\r\n\r\ncontrol,A,,,"1000 5000 50",,,,,,,,\r\ndirection,A,,B,123°45\'06.7",,,1.5,1.6,s1,,"a\nb"\r\nslope_distance,A,,B,100.1234,ft,2,1.5,1.6,,,\nheight_difference,A,,B,-1.2345,,,,,,0.5,\nzenith,A,,B,91 00 00\nangle,A,C,B,12-30-00,,,,,,,\n'
console.log(JSON.stringify(readObservationCsv(t), null, 0))
const bad = 'kind,at,to,value,unit,from\nfoo,A,B,1\ndirection,A,A,12x.5\nslope_distance,A,B,-3\nzenith,A,B,400,deg\nangle,A,B,1 60 00\nheight_difference,A,B,1\ndirection,A,B,1,m\n"unterminated,A\n'
console.log(JSON.stringify(readObservationCsv(bad), null, 0))
