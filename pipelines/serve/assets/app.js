// The atlas map of `swellgrid serve`: the cells of the run drawn on a canvas
// in the report's colour scale (api/atlas.json), one layer per numeric column
// of cells.parquet, the contour layers, the sites and stations, a coastline,
// hover to read a cell's value, click to open the cell's page.
(async function () {
  'use strict';
  const state = { ready: false, layer: null, values: null, selected: -1, renders: 0, timings: {} };
  const t0 = performance.now();
  const mark = (k) => { state.timings[k] = Math.round(performance.now() - t0); };
  window.swellgrid = state;
  const get = async (url, kind) => {
    const r = await fetch(url);
    if (!r.ok) throw new Error(url + ': ' + r.status);
    return kind === 'json' ? r.json() : r.arrayBuffer();
  };
  const atlas = await get('api/atlas.json', 'json');
  const n = atlas.cells;
  state.cells = n;
  const cen = new Float64Array(await get('api/centres.bin'));
  const land = new Uint8Array(await get('api/land.bin'));
  const lonOf = (i) => cen[i], latOf = (i) => cen[n + i];
  const clampLat = (y) => Math.max(-85, Math.min(85, y));
  const proj = (lon, lat) => ol.proj.fromLonLat([lon, clampLat(lat)]);
  // cell centres and outlines in the map's projection (EPSG:3857)
  mark('fetched');
  // lon/lat to the map's projection, flat [x0, y0, x1, y1, ...] arrays in one call
  const toMap = ol.proj.getTransform('EPSG:4326', 'EPSG:3857');
  const project = (flat) => {
    for (let k = 1; k < flat.length; k += 2) flat[k] = clampLat(flat[k]);
    return toMap(flat, flat, 2);
  };
  const cxy = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) { cxy[2 * i] = lonOf(i); cxy[2 * i + 1] = latOf(i); }
  project(cxy);
  const cx = new Float64Array(n), cy = new Float64Array(n);
  for (let i = 0; i < n; i++) { cx[i] = cxy[2 * i]; cy[i] = cxy[2 * i + 1]; }
  // outlines (structured grids and meshes): cell i has the corners
  // off[i] .. off[i+1]-1 of outl (x, y pairs)
  let outl = null, off = null;
  if (atlas.outlines) {
    const buf = await get('api/outlines.bin');
    off = new Uint32Array(buf, 0, n + 1);
    outl = Float64Array.from(new Float32Array(buf, 4 * (n + 1)));
    project(outl);
  }
  const hasOutline = (i) => off && off[i + 1] - off[i] >= 3;
  const inOutline = (i, p) => {
    let inside = false;
    for (let a = off[i], c = off[i + 1] - 1; a < off[i + 1]; c = a++) {
      const xa = outl[2 * a], ya = outl[2 * a + 1], xc = outl[2 * c], yc = outl[2 * c + 1];
      if ((ya > p[1]) !== (yc > p[1]) && p[0] < (xc - xa) * (p[1] - ya) / (yc - ya) + xa) inside = !inside;
    }
    return inside;
  };
  mark('projected');
  // colour index of a value, as report.Viridis.Index: floor((v - min) / (max - min) * 256), clamped
  const colourIndex = (v, L) => {
    if (L.max === L.min) return 128;
    return Math.min(255, Math.max(0, Math.floor((v - L.min) / (L.max - L.min) * 256)));
  };
  const NODATA = 256, LAND = 257;
  const palette = atlas.colours.concat([atlas.no_data, atlas.land]);
  let classes = null; // per colour: the cells drawn in it
  const classify = () => {
    classes = palette.map(() => []);
    for (let i = 0; i < n; i++) {
      if (isNaN(cx[i]) || isNaN(cy[i])) continue;
      const v = state.values[i];
      const k = land[i] ? LAND : (isNaN(v) || !isFinite(v)) ? NODATA : colourIndex(v, state.layer);
      classes[k].push(i);
    }
  };
  const pointRadius = 4;
  const cellsSource = new ol.source.ImageCanvas({
    ratio: 1,
    canvasFunction: function (extent, resolution, pixelRatio, size) {
      const canvas = document.createElement('canvas');
      canvas.width = size[0]; canvas.height = size[1];
      const ctx = canvas.getContext('2d');
      if (!classes) return canvas;
      const c0 = performance.now();
      const sx = size[0] / (extent[2] - extent[0]), sy = size[1] / (extent[3] - extent[1]);
      const X = (x) => (x - extent[0]) * sx, Y = (y) => (extent[3] - y) * sy;
      for (let k = 0; k < palette.length; k++) {
        const list = classes[k];
        if (!list.length) continue;
        ctx.fillStyle = palette[k];
        ctx.strokeStyle = palette[k];
        ctx.lineWidth = 0.6;
        ctx.beginPath();
        for (const i of list) {
          if (outl) {
            if (!hasOutline(i)) continue;
            const a = off[i];
            ctx.moveTo(X(outl[2 * a]), Y(outl[2 * a + 1]));
            for (let c = a + 1; c < off[i + 1]; c++) ctx.lineTo(X(outl[2 * c]), Y(outl[2 * c + 1]));
            ctx.closePath();
          } else {
            const x = X(cx[i]), y = Y(cy[i]);
            ctx.moveTo(x + pointRadius * pixelRatio, y);
            ctx.arc(x, y, pointRadius * pixelRatio, 0, 2 * Math.PI);
          }
        }
        ctx.fill();
        if (outl) ctx.stroke(); // closes the hairline gaps between neighbours
      }
      state.timings.canvas = Math.round(performance.now() - c0);
      return canvas;
    }
  });
  // the coastline (Natural Earth land, the whole world) is read after the
  // cells are first drawn: its parsing would hold up the first map
  const landSource = new ol.source.Vector({ overlaps: false });
  const loadLand = async () => {
    const topo = await get('assets/vendor/world-atlas/land-50m.json', 'json');
    landSource.addFeatures(new ol.format.TopoJSON({ layers: ['land'] }).readFeatures(topo, { featureProjection: 'EPSG:3857' }));
    state.coastline = landSource.getFeatures().length;
  };
  const coastFill = new ol.layer.Vector({ source: landSource, style: new ol.style.Style({ fill: new ol.style.Fill({ color: atlas.land }) }), zIndex: 0 });
  const cellsLayer = new ol.layer.Image({ source: cellsSource, zIndex: 1 });
  const coastLine = new ol.layer.Vector({ source: landSource, style: new ol.style.Style({ stroke: new ol.style.Stroke({ color: '#6b604a', width: 0.8 }) }), zIndex: 2 });
  // contour layers
  const contourDiv = document.getElementById('contours');
  const contourLayers = atlas.contours.map((c, k) => {
    const lyr = new ol.layer.Vector({
      source: new ol.source.Vector({ url: c.file, format: new ol.format.GeoJSON() }),
      visible: false, zIndex: 3,
      style: c.bands
        ? new ol.style.Style({ stroke: new ol.style.Stroke({ color: 'rgba(255,255,255,0.9)', width: 1 }) })
        : new ol.style.Style({ stroke: new ol.style.Stroke({ color: '#111', width: 1.2 }) })
    });
    lyr.set('file', c.file);
    const lab = document.createElement('label');
    const cb = document.createElement('input');
    cb.type = 'checkbox'; cb.dataset.file = c.file;
    cb.addEventListener('change', () => lyr.setVisible(cb.checked));
    lab.append(cb, ' ' + c.label);
    contourDiv.append(lab, document.createElement('br'));
    return lyr;
  });
  state.contours = contourLayers;
  if (!atlas.contours.length) contourDiv.textContent = 'no contour layers in this run';
  // sites and stations
  const marks = new ol.source.Vector();
  for (const s of atlas.sites) marks.addFeature(new ol.Feature({ geometry: new ol.geom.Point(proj(s.lon, s.lat)), name: s.name, kind: 'site' }));
  for (const s of atlas.stations) marks.addFeature(new ol.Feature({ geometry: new ol.geom.Point(proj(s.lon, s.lat)), name: s.name, kind: 'station' }));
  const siteStyle = (f) => new ol.style.Style({
    image: f.get('kind') === 'site'
      ? new ol.style.Circle({ radius: 6, fill: new ol.style.Fill({ color: '#ffffff' }), stroke: new ol.style.Stroke({ color: '#000', width: 2 }) })
      : new ol.style.RegularShape({ points: 3, radius: 8, fill: new ol.style.Fill({ color: '#d62728' }), stroke: new ol.style.Stroke({ color: '#000', width: 1.5 }) }),
    text: new ol.style.Text({ text: f.get('name') + (f.get('kind') === 'station' ? ' (station)' : ''), offsetY: f.get('kind') === 'station' ? 16 : -14, font: '12px sans-serif',
      fill: new ol.style.Fill({ color: '#000' }), stroke: new ol.style.Stroke({ color: '#fff', width: 3 }) })
  });
  const marksLayer = new ol.layer.Vector({ source: marks, style: siteStyle, zIndex: 5 });
  document.getElementById('show-sites').addEventListener('change', (e) => marksLayer.setVisible(e.target.checked));
  // the selected cell
  const selSource = new ol.source.Vector();
  const selLayer = new ol.layer.Vector({ source: selSource, zIndex: 4, style: new ol.style.Style({ stroke: new ol.style.Stroke({ color: '#e4002b', width: 2.5 }), image: new ol.style.Circle({ radius: 7, stroke: new ol.style.Stroke({ color: '#e4002b', width: 2.5 }) }) }) });
  const ext = ol.proj.transformExtent(atlas.extent, 'EPSG:4326', 'EPSG:3857');
  const map = new ol.Map({
    target: 'map',
    layers: [coastFill, cellsLayer, coastLine, ...contourLayers, selLayer, marksLayer],
    view: new ol.View({ center: ol.extent.getCenter(ext), zoom: 2 }),
    controls: ol.control.defaults.defaults().extend([new ol.control.ScaleLine()])
  });
  map.getView().fit(ol.extent.buffer(ext, Math.max(ol.extent.getWidth(ext), ol.extent.getHeight(ext), 2e4) * 0.08), { padding: [10, 10, 10, 10] });
  state.map = map;

  // numbers as the report prints them: 4 significant digits
  const fmt = (v, L) => {
    if (isNaN(v)) return '–';
    if (L && L.int) return String(Math.round(v));
    if (v === 0) return '0';
    return String(Number(v.toPrecision(4)));
  };
  const legend = document.getElementById('legend');
  const drawLegend = (L) => {
    legend.innerHTML = '';
    const t = document.createElement('div');
    t.className = 'title';
    t.textContent = L.doc + L.unit_label;
    const bar = document.createElement('canvas');
    bar.width = 256; bar.height = 14; bar.className = 'bar';
    const g = bar.getContext('2d');
    atlas.colours.forEach((c, k) => { g.fillStyle = c; g.fillRect(k, 0, 1, 14); });
    const ends = document.createElement('div');
    ends.className = 'ends';
    const u = L.unit_label ? ' ' + L.unit : '';
    ends.innerHTML = '<span></span><span></span>';
    ends.children[0].textContent = fmt(L.lo, L) + u;
    ends.children[1].textContent = fmt(L.hi, L) + u;
    const key = document.createElement('div');
    key.className = 'key';
    key.innerHTML = '<span class="sw" style="background:' + atlas.land + '"></span> land or masked <span class="sw" style="background:' + atlas.no_data + '"></span> no result';
    const note = document.createElement('div');
    note.className = 'note';
    note.textContent = L.column + ': viridis from ' + fmt(L.lo, L) + ' to ' + fmt(L.hi, L) + u + ' over ' + L.valid + ' sea cells.';
    legend.append(t, bar, ends, key, note);
  };
  const rendered = () => new Promise((res) => map.once('rendercomplete', res));
  const setLayer = async (name) => {
    const L = atlas.layers.find((l) => l.column === name);
    if (!L) throw new Error('no layer ' + name);
    state.ready = false;
    state.values = new Float64Array(await get('api/layer/' + encodeURIComponent(name) + '.bin'));
    state.layer = L;
    mark('layer');
    classify();
    mark('classified');
    drawLegend(L);
    const done = rendered();
    cellsSource.changed();
    map.render();
    await done;
    mark('drawn');
    state.renders++;
    state.ready = true;
  };
  state.setLayer = setLayer;
  const sel = document.getElementById('layer');
  for (const L of atlas.layers) {
    const o = document.createElement('option');
    o.value = L.column; o.textContent = L.column + L.unit_label;
    sel.append(o);
  }
  sel.addEventListener('change', () => setLayer(sel.value));

  // the cell under a pixel: with outlines, the cell whose outline holds the
  // point, tried from the nearest centre out (a mesh's median dual cell
  // need not hold every point nearest its node); without them (points),
  // the nearest centre within a few pixels
  const cellAt = (coord) => {
    let best = -1, bd = Infinity;
    const d2 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const dx = cx[i] - coord[0], dy = cy[i] - coord[1];
      const d = dx * dx + dy * dy;
      d2[i] = d;
      if (d < bd) { bd = d; best = i; }
    }
    if (best < 0) return -1;
    if (outl) {
      if (hasOutline(best) && inOutline(best, coord)) return best;
      const near = [];
      for (let i = 0; i < n; i++) if (i !== best && d2[i] <= 9 * bd && hasOutline(i)) near.push(i);
      near.sort((a, b) => d2[a] - d2[b]);
      for (const i of near) if (inOutline(i, coord)) return i;
      return -1;
    }
    const r = map.getView().getResolution() * (pointRadius + 3);
    return bd <= r * r ? best : -1;
  };
  state.cellAt = cellAt;
  state.pixelOfCell = (i) => map.getPixelFromCoordinate([cx[i], cy[i]]);
  const hover = document.getElementById('hover');
  map.on('pointermove', (e) => {
    if (e.dragging) return;
    const i = cellAt(e.coordinate);
    if (i < 0 || !state.layer) { hover.style.display = 'none'; return; }
    const L = state.layer;
    const v = land[i] ? 'land or masked' : fmt(state.values[i], L) + (L.unit_label ? ' ' + L.unit : '');
    hover.textContent = 'cell ' + i + ' (' + fmt(lonOf(i)) + ' °E, ' + fmt(latOf(i)) + ' °N): ' + L.column + ' = ' + v;
    hover.style.left = (e.pixel[0] + 14) + 'px';
    hover.style.top = (e.pixel[1] + 14) + 'px';
    hover.style.display = 'block';
  });
  const panel = document.getElementById('panel');
  const frame = document.getElementById('cellpage');
  frame.addEventListener('load', () => { // the page's link to the atlas leaves the panel
    const d = frame.contentDocument;
    if (d) for (const a of d.querySelectorAll('a[href="index.html"]')) a.target = '_top';
  });
  const openCell = (i) => {
    state.selected = i;
    selSource.clear();
    if (hasOutline(i)) {
      const ring = [];
      for (let c = off[i]; c < off[i + 1]; c++) ring.push([outl[2 * c], outl[2 * c + 1]]);
      ring.push(ring[0]);
      selSource.addFeature(new ol.Feature(new ol.geom.Polygon([ring])));
    } else {
      selSource.addFeature(new ol.Feature(new ol.geom.Point([cx[i], cy[i]])));
    }
    const url = 'cell/' + i + '/';
    frame.src = url;
    document.getElementById('panel-open').href = url;
    panel.hidden = false;
  };
  state.openCell = openCell;
  map.on('singleclick', (e) => {
    const i = cellAt(e.coordinate);
    if (i >= 0) openCell(i);
  });
  document.getElementById('panel-close').addEventListener('click', () => { panel.hidden = true; });
  document.getElementById('search').addEventListener('submit', async (e) => {
    e.preventDefault();
    const out = document.getElementById('found');
    const lon = document.getElementById('lon').value.trim(), lat = document.getElementById('lat').value.trim();
    const r = await fetch('api/nearest?lon=' + encodeURIComponent(lon) + '&lat=' + encodeURIComponent(lat));
    if (!r.ok) { out.textContent = await r.text(); return; }
    const c = await r.json();
    out.textContent = 'nearest sea cell with a result: ' + c.cell + ' at ' + fmt(c.lon) + ' °E, ' + fmt(c.lat) + ' °N, ' + fmt(c.distance_km) + ' km away';
    map.getView().animate({ center: [cx[c.cell], cy[c.cell]], duration: 300 });
    openCell(c.cell);
  });
  await setLayer(atlas.layers[0].column);
  await loadLand();
})().catch((err) => {
  const d = document.createElement('p');
  d.className = 'error';
  d.textContent = 'The map could not be drawn: ' + err.message;
  document.getElementById('side').append(d);
  console.error(err);
});
