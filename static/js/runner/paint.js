// Drawing compiled device levels on a canvas: 8-bit canvases take rgb() levels directly; deeper profiles use a
// float16 canvas holding level / d_max exactly (checked by the colour self-test before the first trial).

export class Painter {
  constructor(canvas, data) {
    this.canvas = canvas;
    this.bits = data.display.bits;
    this.dMax = 2 ** this.bits - 1;
    const [width, height] = data.display.size_px;
    canvas.width = width;
    canvas.height = height;
    canvas.style.width = `${width / devicePixelRatio}px`;
    canvas.style.height = `${height / devicePixelRatio}px`;
    this.wide = this.bits > 8;
    this.ctx = canvas.getContext("2d", this.wide ? { colorType: "float16" } : { alpha: false });
    this.supported = !this.wide || this.ctx.getContextAttributes().colorType === "float16";
    this.centre = [width / 2, height / 2];
    this.patches = new Map();
  }

  // Centre the canvas in the window on whole device pixels: a window smaller than the profile's screen loses the same
  // margin on each side, so the centre (fixation, stimuli, the gap in the text) stays in view.
  centreInWindow() {
    const place = () => {
      const dpr = devicePixelRatio;
      this.canvas.style.left = `${Math.round((innerWidth * dpr - this.canvas.width) / 2) / dpr}px`;
      this.canvas.style.top = `${Math.round((innerHeight * dpr - this.canvas.height) / 2) / dpr}px`;
    };
    place();
    addEventListener("resize", place);
  }

  // The part of the canvas the window shows, [width, height] in device pixels.
  visible() {
    return [Math.min(this.canvas.width, Math.round(innerWidth * devicePixelRatio)),
      Math.min(this.canvas.height, Math.round(innerHeight * devicePixelRatio))];
  }

  css(device) {
    const [r, g, b] = device;
    if (this.wide) return `color(srgb ${r / this.dMax} ${g / this.dMax} ${b / this.dMax})`;
    return `rgb(${r} ${g} ${b})`;
  }

  // Draw one pixel with the same path as stimuli and read it back as device levels.
  probe(device) {
    this.ctx.fillStyle = this.css(device);
    this.ctx.fillRect(0, 0, 1, 1);
    const pixel = this.wide ? this.ctx.getImageData(0, 0, 1, 1, { pixelFormat: "rgba-float16" })
      : this.ctx.getImageData(0, 0, 1, 1);
    return Array.from(pixel.data.slice(0, 3), (v) => (this.wide ? Math.round(v * this.dMax) : v));
  }

  // Device levels at the pixels columns × rows (row by row, three per pixel): the parity test reads the canvas back.
  read(columns, rows) {
    const { width, height } = this.canvas;
    const data = this.wide ? this.ctx.getImageData(0, 0, width, height, { pixelFormat: "rgba-float16" }).data
      : this.ctx.getImageData(0, 0, width, height).data;
    const out = [];
    for (const y of rows) {
      for (const x of columns) {
        const o = 4 * (y * width + x);
        for (let c = 0; c < 3; c++) out.push(this.wide ? Math.round(data[o + c] * this.dMax) : data[o + c]);
      }
    }
    return out;
  }

  at(position) {
    return [this.centre[0] + position[0], this.centre[1] - position[1]];
  }

  disc(x, y, radius, device) {
    this.ctx.fillStyle = this.css(device);
    this.ctx.beginPath();
    this.ctx.arc(x, y, radius, 0, 2 * Math.PI);
    this.ctx.fill();
  }

  // scene: { background, items: [{ geometry, device, second, patch }], fixation }
  draw(scene) {
    const ctx = this.ctx;
    ctx.fillStyle = this.css(scene.background);
    ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    for (const item of scene.items) this.item(item);
    if (scene.fixation) this.fixation(scene.fixation);
  }

  item({ geometry: g, device, second, patch }) {
    const [x, y] = this.at(g.position_px);
    const r = (g.size_px ?? 0) / 2;
    const ctx = this.ctx;
    switch (g.shape) {
      case "uniform_field":
        ctx.fillStyle = this.css(device);
        ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
        break;
      case "square":
        ctx.fillStyle = this.css(device);
        ctx.fillRect(x - r, y - r, 2 * r, 2 * r);
        break;
      case "annulus":
        ctx.fillStyle = this.css(device);
        ctx.beginPath();
        ctx.arc(x, y, r, 0, 2 * Math.PI);
        ctx.arc(x, y, g.inner_size_px / 2, 0, 2 * Math.PI, true);
        ctx.fill("evenodd");
        break;
      case "centre_surround":
        this.disc(x, y, g.surround_size_px / 2, second);
        this.disc(x, y, r, device);
        break;
      case "bipartite":
        ctx.fillStyle = this.css(device);
        ctx.beginPath();
        ctx.arc(x, y, r, Math.PI / 2, 1.5 * Math.PI);
        ctx.fill();
        ctx.fillStyle = this.css(second);
        ctx.beginPath();
        ctx.arc(x, y, r, -Math.PI / 2, Math.PI / 2);
        ctx.fill();
        break;
      case "gaussian":
      case "grating":
        this.putPatch(x, y, patch);
        break;
      default:
        this.disc(x, y, r, device);
    }
  }

  // Per-pixel stimuli: each pixel's whole-number profile value s and the frame's step q pick a table entry by the
  // integer formula of stimlab/experiment/plan.py (exact in doubles: every product stays below 2^53).
  putPatch(x, y, { key, profile, step, table, ladderPosition = null }) {
    let image = this.patches.get(key);
    if (!image) {
      const { half, values } = profile;
      const size = 2 * half + 1;
      image = this.wide ? this.ctx.createImageData(size, size, { pixelFormat: "rgba-float16" })
        : this.ctx.createImageData(size, size);
      const scale = 16384;
      const steps = 255;
      for (let p = 0; p < size * size; p++) {
        const s = values[p];
        if (s === null) continue;
        const index = ladderPosition === null
          ? Math.min(2 * steps, Math.max(0, steps + Math.floor((step * s + scale / 2) / scale)))
          : Math.min(table.length - 1, Math.max(0,
            Math.floor((ladderPosition * step * s + (steps * scale) / 2) / (steps * scale))));
        const device = table[index];
        if (!device) continue;
        const o = 4 * p;
        for (let c = 0; c < 3; c++) image.data[o + c] = this.wide ? device[c] / this.dMax : device[c];
        image.data[o + 3] = this.wide ? 1 : 255;
      }
      image.half = half;
      if (this.patches.size > 512) this.patches.clear();
      this.patches.set(key, image);
    }
    // Transparent corners must show the background: draw through a scratch canvas so alpha composites.
    const scratch = this.scratch ?? (this.scratch = new OffscreenCanvas(1, 1));
    if (scratch.width !== image.width) {
      scratch.width = image.width;
      scratch.height = image.height;
      this.scratchCtx = scratch.getContext("2d", this.wide ? { colorType: "float16" } : {});
    }
    this.scratchCtx.putImageData(image, 0, 0);
    this.ctx.drawImage(scratch, Math.round(x) - image.half, Math.round(y) - image.half);
  }

  fixation({ shape, size_px: size, device }) {
    const [x, y] = this.centre;
    const ctx = this.ctx;
    if (shape === "dot") {
      this.disc(x, y, Math.max(1, size / 2), device);
      return;
    }
    ctx.strokeStyle = this.css(device);
    ctx.lineWidth = Math.max(1, size / 8);
    ctx.beginPath();
    ctx.moveTo(x - size / 2, y);
    ctx.lineTo(x + size / 2, y);
    ctx.moveTo(x, y - size / 2);
    ctx.lineTo(x, y + size / 2);
    ctx.stroke();
  }
}
