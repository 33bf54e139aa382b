import Papa from 'papaparse'
const text='a,b\n#c\n#d\nx,y\n\n#e'
Papa.parse<string[]>(text,{delimiter:',',newline:'\n',comments:'#',skipEmptyLines:false,step:(r)=>console.log(JSON.stringify(r.data),r.meta.cursor)})
