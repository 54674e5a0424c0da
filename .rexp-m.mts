import sharp from "sharp";
const W=4961,H=7016;
const px = new Uint16Array(W*H*3);
let s=12345; for (let i=0;i<px.length;i++){ s=(s*1103515245+12345)>>>0; px[i]= 20000 + ((s>>>16)&0x3fff); }
await sharp(px,{raw:{width:W,height:H,channels:3}}).toColourspace("rgb16").tiff({compression:"lzw", predictor:"horizontal"}).toFile("/tmp/rexp/a4-600-16.tif");
await sharp(px,{raw:{width:W,height:H,channels:3}}).toColourspace("rgb16").tiff({compression:"lzw", predictor:"horizontal", tile:true}).toFile("/tmp/rexp/a4-600-16-tiled.tif");
await sharp(px,{raw:{width:W,height:H,channels:3}}).toColourspace("srgb").jpeg({quality:92}).toFile("/tmp/rexp/a4-600.jpg");
