import Papa from 'papaparse'
const t = 'kind,at\n# c "x\n\n"a\nb",2\r\nx,y\n  \nlast,1'
const rows=[]
Papa.parse(t, { comments: '#', skipEmptyLines: false, step: (r) => rows.push([r.data, r.meta.cursor, r.errors]) })
console.log(JSON.stringify(rows))
