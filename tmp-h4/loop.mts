const a = new Uint16Array(2048*2048).map((_, i) => i & 0xffff);
for (let k=0;k<3;k++){ let t=performance.now(); let s=0, mx=0; for (let i=0;i<a.length;i++){ const v=a[i]; s+=v; if (v>mx) mx=v;} console.log('loop', (performance.now()-t).toFixed(1), s, mx); }
