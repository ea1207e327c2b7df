-- underdraw.lua: draws what `underdraw scene --export DIR` writes, in LÖVE 11.
--
--   local underdraw = require("underdraw")
--   local scene = underdraw.load_scene("out/harbour/export")  -- draw-list.json
--   scene:draw(camera_x)              -- the split way (what the list says)
--   scene:draw(camera_x, "plain")     -- every layer's rectangle, blended
--
-- draw() must target a canvas with a depth buffer, e.g.
--   love.graphics.setCanvas({canvas, depth = true})
--   love.graphics.clear(0, 0, 0, 1, false, scene.depth_clear)
--
-- Regions of a sprite sheet (a mesh file with a "region" key) draw from
-- the sheet; a nine-slice panel can be placed at any size
-- (underdraw.place_panel, set_panel_size) and an animation's frame chosen
-- (underdraw.frame_uvs, set_frame). One layer alone (a UI panel):
--   local panel = underdraw.load_mesh("ui/panel.mesh.json", "ui-sheet.png")
--   underdraw.set_panel_size(panel, {200, 90})
--   underdraw.draw_split(panel, x, y, scale)
--
-- One file, no dependencies but LÖVE 11 (LuaJIT / Lua 5.1); it reads files
-- with io.open, so the export folder may lie anywhere on disk.

local underdraw = {}

---------------------------------------------------------------------------
-- A small JSON decoder (RFC 8259): objects become tables with string keys,
-- arrays 1-based tables, null becomes nil, numbers Lua numbers (doubles).

local json = {}

local escapes = {
  ['"'] = '"', ["\\"] = "\\", ["/"] = "/",
  b = "\b", f = "\f", n = "\n", r = "\r", t = "\t",
}

local function utf8_char(c)
  if c < 0x80 then
    return string.char(c)
  elseif c < 0x800 then
    return string.char(0xC0 + math.floor(c / 0x40), 0x80 + c % 0x40)
  elseif c < 0x10000 then
    return string.char(0xE0 + math.floor(c / 0x1000),
      0x80 + math.floor(c / 0x40) % 0x40, 0x80 + c % 0x40)
  end
  return string.char(0xF0 + math.floor(c / 0x40000),
    0x80 + math.floor(c / 0x1000) % 0x40,
    0x80 + math.floor(c / 0x40) % 0x40, 0x80 + c % 0x40)
end

-- Decodes `text`; on bad JSON raises "NAME: line L column C: what".
function json.decode(text, name)
  local pos = 1
  local function fail(what)
    local line, col = 1, 1
    for i = 1, math.min(pos, #text + 1) - 1 do
      if text:sub(i, i) == "\n" then line, col = line + 1, 1 else col = col + 1 end
    end
    error(string.format("%s: line %d column %d: %s", name or "JSON", line, col, what), 0)
  end
  local function skip()
    pos = text:find("[^ \t\r\n]", pos) or #text + 1
  end
  local value
  local function str()
    pos = pos + 1 -- opening quote
    local parts = {}
    while true do
      local s, e = text:find('["\\%c]', pos)
      if not s then fail("unterminated string") end
      parts[#parts + 1] = text:sub(pos, s - 1)
      local ch = text:sub(s, s)
      if ch == '"' then
        pos = s + 1
        return table.concat(parts)
      elseif ch == "\\" then
        local esc = text:sub(s + 1, s + 1)
        if esc == "u" then
          local hex = text:sub(s + 2, s + 5)
          if not hex:match("^%x%x%x%x$") then pos = s; fail("bad \\u escape") end
          local c = tonumber(hex, 16)
          pos = s + 6
          if c >= 0xD800 and c < 0xDC00 then -- a surrogate pair
            local lo = text:match("^\\u(%x%x%x%x)", pos)
            lo = lo and tonumber(lo, 16)
            if not lo or lo < 0xDC00 or lo > 0xDFFF then fail("lone surrogate") end
            c = 0x10000 + (c - 0xD800) * 0x400 + (lo - 0xDC00)
            pos = pos + 6
          end
          parts[#parts + 1] = utf8_char(c)
        elseif escapes[esc] then
          parts[#parts + 1] = escapes[esc]
          pos = s + 2
        else
          pos = s; fail("bad escape \\" .. esc)
        end
      else
        pos = s; fail("control character in a string")
      end
    end
  end
  function value()
    skip()
    local ch = text:sub(pos, pos)
    if ch == "{" then
      local obj = {}
      pos = pos + 1
      skip()
      if text:sub(pos, pos) == "}" then pos = pos + 1; return obj end
      while true do
        skip()
        if text:sub(pos, pos) ~= '"' then fail("expected a key string") end
        local key = str()
        skip()
        if text:sub(pos, pos) ~= ":" then fail("expected ':'") end
        pos = pos + 1
        obj[key] = value()
        skip()
        local sep = text:sub(pos, pos)
        pos = pos + 1
        if sep == "}" then return obj end
        if sep ~= "," then pos = pos - 1; fail("expected ',' or '}'") end
      end
    elseif ch == "[" then
      local arr, n = {}, 0
      pos = pos + 1
      skip()
      if text:sub(pos, pos) == "]" then pos = pos + 1; return arr end
      while true do
        n = n + 1
        arr[n] = value()
        skip()
        local sep = text:sub(pos, pos)
        pos = pos + 1
        if sep == "]" then return arr end
        if sep ~= "," then pos = pos - 1; fail("expected ',' or ']'") end
      end
    elseif ch == '"' then
      return str()
    elseif text:sub(pos, pos + 3) == "true" then
      pos = pos + 4; return true
    elseif text:sub(pos, pos + 4) == "false" then
      pos = pos + 5; return false
    elseif text:sub(pos, pos + 3) == "null" then
      pos = pos + 4; return nil
    end
    -- a number: -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][-+]?[0-9]+)?
    local e = pos
    if text:sub(e, e) == "-" then e = e + 1 end
    local int = text:match("^0", e) or text:match("^[1-9]%d*", e)
    if not int then fail("unexpected character") end
    e = e + #int
    local frac = text:match("^%.%d+", e)
    if frac then e = e + #frac end
    local exp = text:match("^[eE][-+]?%d+", e)
    if exp then e = e + #exp end
    if text:match("^[%.eE%d]", e) then pos = e; fail("malformed number") end
    local num = tonumber(text:sub(pos, e - 1))
    pos = e
    return num
  end
  local v = value()
  skip()
  if pos <= #text then fail("trailing characters after the value") end
  return v
end

underdraw.json = json

---------------------------------------------------------------------------
-- Files

local function read_file(path, what)
  local f, err = io.open(path, "rb")
  if not f then
    error(string.format("%s: cannot be read (%s); %s", path, err, what), 0)
  end
  local bytes = f:read("*a")
  f:close()
  return bytes
end

local function read_json(path, what)
  return json.decode(read_file(path, what), path)
end

-- A relative URI (as in the draw list's "image") to a path: %XX decoded.
local function uri_path(uri)
  return (uri:gsub("%%(%x%x)", function(h) return string.char(tonumber(h, 16)) end))
end

local function join(dir, rel)
  if rel:sub(1, 1) == "/" or rel:match("^%a:[/\\]") then return rel end
  return dir .. "/" .. rel
end

local function bad(path, what, todo)
  error(string.format("%s: %s; %s", path, what, todo), 0)
end

---------------------------------------------------------------------------
-- Regions of a sprite sheet: nine-slice panels and animation frames.
-- These functions read a decoded mesh file (a table as underdraw.json.decode
-- returns it) and need no LÖVE, so a game may call them anywhere.

-- The nine-slice rule along one axis: where a vertex anchored in slice
-- `c` (0, 1, 2) at offset `d` texels lands when a region `n` texels long,
-- with insets `lo` and `hi`, is drawn `to` long. The corners keep their
-- size, the middle slice is stretched.
local function slice_place(c, d, n, lo, hi, to)
  if c == 0 then return d end
  if c == 2 then return to - hi + d end
  local middle = n - lo - hi
  if middle <= 0 then return lo end -- no middle slice: nothing to stretch
  return lo + d * (to - lo - hi) / middle
end

-- The vertex positions of a nine-slice panel mesh drawn `size` = {w, h}
-- texels: a flat list {x1, y1, x2, y2, ...} in the order of the mesh's
-- vertices, each placed from its `slice_positions` anchor [column, row,
-- dx, dy] (column 0 at dx, 1 at left + dx * (w - left - right) / (region
-- width - left - right), 2 at w - right + dx; rows alike). Works on a mesh
-- exported at any size: the anchors refer to the region as cut.
function underdraw.place_panel(m, size)
  local r = m.region
  if not (r and r.slices and r.slice_positions) then
    error("place_panel: the mesh is not a nine-slice panel (no region.slices and region.slice_positions)", 2)
  end
  local rw, rh = r.rect[3], r.rect[4]
  local l, t, rr, b = r.slices[1], r.slices[2], r.slices[3], r.slices[4]
  local w, h = size[1], size[2]
  if w < l + rr or h < t + b then
    error(string.format("place_panel: %s x %s is smaller than the panel's corners (%d x %d)",
      tostring(w), tostring(h), l + rr, t + b), 2)
  end
  local out = {}
  for k, a in ipairs(r.slice_positions) do
    out[2 * k - 1] = slice_place(a[1], a[3], rw, l, rr, w)
    out[2 * k] = slice_place(a[2], a[4], rh, t, b, h)
  end
  return out
end

-- The texture coordinates of an animation mesh for frame `frame` (1-based,
-- as Lua counts: 1 is the first entry of region.frames): a flat list {u1,
-- v1, u2, v2, ...}, the mesh's uvs (which draw the first frame) plus that
-- frame's entry of `frame_uv_offsets`. For a mesh without frames, frame 1
-- is its uvs as they are.
function underdraw.frame_uvs(m, frame)
  local offsets = m.region and m.region.frame_uv_offsets
  local du, dv = 0, 0
  if offsets then
    local o = offsets[frame]
    if not o then
      error(string.format("frame_uvs: frame %s is not one of the mesh's %d frames (1 to %d)",
        tostring(frame), #offsets, #offsets), 2)
    end
    du, dv = o[1], o[2]
  elseif frame ~= 1 then
    error("frame_uvs: the mesh has no frames, only frame 1", 2)
  end
  local out = {}
  for i = 1, #m.uvs, 2 do
    out[i] = m.uvs[i] + du
    out[i + 1] = m.uvs[i + 1] + dv
  end
  return out
end

---------------------------------------------------------------------------
-- The mesh file: one vertex array, two triangle lists.

-- Positions in texels and texture coordinates, as the mesh file gives them.
underdraw.vertex_format = {
  { "VertexPosition", "float", 2 },
  { "VertexTexCoord", "float", 2 },
}

local function vertex_map(list, n, path, which)
  local map = {}
  for i, v in ipairs(list) do
    if v ~= math.floor(v) or v < 0 or v >= n then
      bad(path, string.format("%s index %s names no vertex (the mesh has %d)", which, tostring(v), n),
        "export the scene again")
    end
    map[i] = v + 1 -- LÖVE's vertex maps count from 1
  end
  if #map % 3 ~= 0 then
    bad(path, which .. " indices are not whole triangles", "export the scene again")
  end
  return map
end

local function fmt_list(t)
  local out = {}
  for i, v in ipairs(t or {}) do out[i] = tostring(v) end
  return "[" .. table.concat(out, ", ") .. "]"
end

local function same_list(a, b)
  if type(a) ~= "table" or type(b) ~= "table" or #a ~= #b then return false end
  for i = 1, #a do if a[i] ~= b[i] then return false end end
  return true
end

local function whole_numbers(t, n)
  if type(t) ~= "table" or #t ~= n then return false end
  for i = 1, n do
    if type(t[i]) ~= "number" or t[i] ~= math.floor(t[i]) or t[i] < 0 then return false end
  end
  return true
end

-- Checks a region mesh's `region` key against its image (w x h) and the
-- draw list's entry (`entry`, from `list_path`; may be nil).
local function check_region(path, image_path, m, iw, ih, entry, list_path)
  local r = m.region
  local todo = "cut the sheet's regions again with underdraw"
  if not whole_numbers(r.sheet_size, 2) or not whole_numbers(r.rect, 4) then
    bad(path, "its \"region\" lacks whole-number \"sheet_size\" [W, H] and \"rect\" [x, y, w, h]", todo)
  end
  if r.sheet_size[1] ~= iw or r.sheet_size[2] ~= ih then
    bad(image_path, string.format("is %dx%d, but %s was cut from a sheet of %dx%d", iw, ih, path,
      r.sheet_size[1], r.sheet_size[2]), "point the layer's image at the sheet it was cut from, or cut the regions again")
  end
  local rects = { r.rect }
  for _, f in ipairs(r.frames or {}) do rects[#rects + 1] = f end
  for _, q in ipairs(rects) do
    if not whole_numbers(q, 4) or q[3] < 1 or q[4] < 1 or q[1] + q[3] > iw or q[2] + q[4] > ih then
      bad(path, string.format("region rectangle %s lies outside its sheet %s (%dx%d)", fmt_list(q),
        image_path, iw, ih), "fix the rectangle in the regions file and cut the regions again")
    end
  end
  if r.frames and (not r.frame_uv_offsets or #r.frame_uv_offsets ~= #r.frames) then
    bad(path, "has frames but not one frame_uv_offsets entry per frame", todo)
  end
  local rw, rh = r.rect[3], r.rect[4]
  if r.slices then
    local s = r.slices
    if not whole_numbers(s, 4) or s[1] + s[3] > rw or s[2] + s[4] > rh then
      bad(path, "slices " .. fmt_list(s) .. " do not fit the region " .. fmt_list(r.rect), todo)
    end
    if not r.slice_positions or #r.slice_positions ~= #m.positions / 2 then
      bad(path, "has slices but not one slice_positions entry per vertex", todo)
    end
    if m.size[1] < s[1] + s[3] or m.size[2] < s[2] + s[4] then
      bad(path, string.format("size %s is smaller than the panel's corners", fmt_list(m.size)), todo)
    end
  elseif m.size[1] ~= rw or m.size[2] ~= rh then
    bad(path, string.format("size %s differs from its region's %dx%d and it has no slices to stretch by",
      fmt_list(m.size), rw, rh), todo)
  end
  -- the draw list's copy of these keys (written by the scene export) must agree
  if entry then
    local d = entry.region
    if d and (not same_list(d.sheet_size, r.sheet_size) or not same_list(d.rect, r.rect)) then
      bad(list_path, string.format("layer %s has region sheet_size %s rect %s, but its mesh file %s says %s %s",
        tostring(entry.name), fmt_list(d.sheet_size), fmt_list(d.rect), path, fmt_list(r.sheet_size),
        fmt_list(r.rect)), "export the scene again")
    end
    if entry.size and not same_list(entry.size, m.size) then
      bad(list_path, string.format("layer %s has size %s, but its mesh file %s is %s", tostring(entry.name),
        fmt_list(entry.size), path, fmt_list(m.size)), "export the scene again")
    end
    if entry.slices and not same_list(entry.slices, r.slices) then
      bad(list_path, string.format("layer %s has slices %s, but its mesh file %s has %s", tostring(entry.name),
        fmt_list(entry.slices), path, fmt_list(r.slices)), "export the scene again")
    end
  end
end

-- The plain draw of a layer: pieces {quad, x, y, sx, sy}, each a
-- love.graphics Quad of the texture drawn at (x, y) texels of the layer,
-- scaled (sx, sy). One piece over `rect` (x, y, w, h in the texture of
-- size tw x th) drawn `size`; with `slices` (left, top, right, bottom)
-- nine pieces: corners unscaled, edges stretched along one axis, the
-- centre along both (pieces of zero size left out).
function underdraw.plain_pieces(rect, tw, th, size, slices)
  local rx, ry, rw, rh = rect[1], rect[2], rect[3], rect[4]
  if not slices then
    return { { quad = love.graphics.newQuad(rx, ry, rw, rh, tw, th), x = 0, y = 0,
      sx = size[1] / rw, sy = size[2] / rh } }
  end
  local l, t, r, b = slices[1], slices[2], slices[3], slices[4]
  local src_x, dst_x = { 0, l, rw - r, rw }, { 0, l, size[1] - r, size[1] }
  local src_y, dst_y = { 0, t, rh - b, rh }, { 0, t, size[2] - b, size[2] }
  local pieces = {}
  for j = 1, 3 do
    for i = 1, 3 do
      local sw, sh = src_x[i + 1] - src_x[i], src_y[j + 1] - src_y[j]
      local dw, dh = dst_x[i + 1] - dst_x[i], dst_y[j + 1] - dst_y[j]
      if sw > 0 and sh > 0 and dw > 0 and dh > 0 then
        pieces[#pieces + 1] = {
          quad = love.graphics.newQuad(rx + src_x[i], ry + src_y[j], sw, sh, tw, th),
          x = dst_x[i], y = dst_y[j], sx = dw / sw, sy = dh / sh,
        }
      end
    end
  end
  return pieces
end

-- Loads a mesh file (`underdraw.layer` version 2) and the PNG it was cut
-- from (`image_path`; for a region of a sprite sheet, the sheet). `entry`
-- (optional) is the layer's entry of the draw list `list_path`: its
-- "region", "size" and "slices" must agree with the mesh file, which is
-- what is read. `textures` (optional, {data = {}, images = {}, count = 0})
-- shares textures between calls: layers drawn from one file with the same
-- filter, mipmaps and wrap get one Image. Returns a table:
--   size = {w, h} texels as drawn; texture = the Image, filtered and
--   wrapped as the mesh was cut for; vertices = the Mesh holding the one
--   vertex array; opaque, blended = a Mesh each (triangles, a vertex map
--   into that array, nil when the list is empty); plain = the pieces of
--   the plain draw (underdraw.plain_pieces); mesh = the decoded mesh file;
--   region = its "region" (nil for a plain layer); frame = 1.
function underdraw.load_mesh(path, image_path, entry, list_path, textures)
  local m = read_json(path, "give a mesh file written by underdraw")
  if m.format ~= "underdraw.layer" or m.version ~= 2 then
    bad(path, string.format("is format %s version %s, not underdraw.layer version 2",
      tostring(m.format), tostring(m.version)), "give a mesh file written by underdraw")
  end
  local w, h = m.size[1], m.size[2]
  local pos, uv = m.positions, m.uvs
  local n = #pos / 2
  if #pos % 2 ~= 0 or #uv ~= #pos or n < 1 then
    bad(path, "positions and uvs do not match", "export the scene again")
  end
  if entry and (entry.region or entry.size or entry.slices) and not m.region then
    bad(list_path or path, string.format("layer %s is a region of a sheet, but its mesh file %s has no \"region\"",
      tostring(entry.name), path), "export the scene again")
  end

  -- `textures` (from load_scene) shares one decoded image, and one Image
  -- per sampling state, between the layers drawn from one file (a sheet)
  local data = textures and textures.data[image_path]
  if not data then
    local bytes = read_file(image_path, "the layer's PNG must be where the draw list says")
    data = love.image.newImageData(love.filesystem.newFileData(bytes, image_path))
    if textures then textures.data[image_path] = data end
  end
  local iw, ih = data:getWidth(), data:getHeight()
  local rect
  if m.region then
    check_region(path, image_path, m, iw, ih, entry, list_path)
    rect = m.region.rect
  else
    if iw ~= w or ih ~= h then
      bad(image_path, string.format("is %dx%d, but %s was cut for %dx%d", iw, ih, path, w, h),
        "cut the layer again")
    end
    rect = { 0, 0, w, h }
  end
  -- mip_levels > 0: the meshes are safe down to that level, so mipmaps
  -- may be used; 0 means the texture is sampled at full size only.
  local levels = m.filter and m.filter.mip_levels or 0
  local filter = (m.filter and m.filter.mode == "nearest") and "nearest" or "linear"
  local wrap = m.wrap or "none"
  local wx = (wrap == "x" or wrap == "xy") and "repeat" or "clamp"
  local wy = (wrap == "y" or wrap == "xy") and "repeat" or "clamp"
  local key = table.concat({ image_path, tostring(levels > 0), filter, wx, wy }, "|")
  local texture = textures and textures.images[key]
  if not texture then
    texture = love.graphics.newImage(data, { mipmaps = levels > 0 })
    texture:setFilter(filter, filter, 1) -- anisotropy 1: the contract assumes none
    if levels > 0 then texture:setMipmapFilter(filter) end
    texture:setWrap(wx, wy)
    if textures then
      textures.images[key] = texture
      textures.count = textures.count + 1
    end
  end

  local verts = {}
  for i = 1, n do
    verts[i] = { pos[2 * i - 1], pos[2 * i], uv[2 * i - 1], uv[2 * i] }
  end
  local layer = { size = { w, h }, texture = texture, path = path, mesh = m, region = m.region, frame = 1 }
  -- the vertex array lives in one Mesh; the opaque triangles draw from it
  -- directly, the blended ones from a second Mesh that attaches its
  -- attributes (LÖVE shares the buffer; the second Mesh's own one-byte
  -- attribute is never read)
  layer.vertices = love.graphics.newMesh(underdraw.vertex_format, verts, "triangles", "static")
  layer.vertices:setTexture(texture)
  local function part(list, which)
    if not list or #list.indices == 0 then return nil end
    local map = vertex_map(list.indices, n, path, which)
    local mesh
    if which == "opaque" then
      mesh = layer.vertices
    else
      mesh = love.graphics.newMesh({ { "UnderdrawUnused", "byte", 4 } }, n, "triangles", "static")
      mesh:attachAttribute("VertexPosition", layer.vertices)
      mesh:attachAttribute("VertexTexCoord", layer.vertices)
      mesh:setTexture(texture)
    end
    mesh:setVertexMap(map)
    return mesh
  end
  layer.opaque = part(m.opaque, "opaque")
  layer.blended = part(m.blended, "blended")
  -- the plain draw: the region's rectangle (the whole image for a plain
  -- layer), in nine pieces for a nine-slice panel
  layer.plain = underdraw.plain_pieces(rect, iw, ih, layer.size, m.region and m.region.slices)
  return layer
end

-- Rewrites the vertex array of `layer` (from load_mesh) from flat lists of
-- positions and uvs (nil keeps the current one).
local function set_vertices(layer, positions, uvs)
  local m = layer.mesh
  layer.positions = positions or layer.positions or m.positions
  layer.uvs = uvs or layer.uvs or m.uvs
  local verts = {}
  for i = 1, #layer.positions / 2 do
    verts[i] = { layer.positions[2 * i - 1], layer.positions[2 * i], layer.uvs[2 * i - 1], layer.uvs[2 * i] }
  end
  layer.vertices:setVertices(verts)
end

-- Draws a nine-slice panel layer at `size` = {w, h} texels from now on:
-- its vertices placed by underdraw.place_panel, its plain pieces
-- stretched alike. (A scene's layer keeps its copies' placement: size
-- changes only how far the panel reaches.)
function underdraw.set_panel_size(layer, size)
  set_vertices(layer, underdraw.place_panel(layer.mesh, size), nil)
  layer.size = { size[1], size[2] }
  local r = layer.region
  local rect = r.frames and r.frames[layer.frame] or r.rect
  layer.plain = underdraw.plain_pieces(rect, r.sheet_size[1], r.sheet_size[2], layer.size, r.slices)
end

-- Draws frame `frame` (1-based) of an animation layer from now on: its
-- uvs from underdraw.frame_uvs, its plain piece over that frame.
function underdraw.set_frame(layer, frame)
  set_vertices(layer, nil, underdraw.frame_uvs(layer.mesh, frame))
  layer.frame = frame
  local r = layer.region
  if not r then error("set_frame: layer " .. tostring(layer.name) .. " is not a region of a sheet", 2) end
  local rect = r.frames and r.frames[frame] or r.rect
  layer.plain = underdraw.plain_pieces(rect, r.sheet_size[1], r.sheet_size[2], layer.size, r.slices)
end

---------------------------------------------------------------------------
-- Drawing one layer, without a scene (a UI panel, a sprite): its top-left
-- at (x, y), `scale` screen pixels per texel, at its current size and
-- frame. The caller's blend mode is changed (wrap in push("all") / pop()).

-- The plain way: the layer's pieces (underdraw.plain_pieces), blended
-- "over". Returns the love.graphics.draw calls made.
function underdraw.draw_plain(layer, x, y, scale)
  love.graphics.setBlendMode("alpha", "alphamultiply")
  for _, p in ipairs(layer.plain) do
    love.graphics.draw(layer.texture, p.quad, x + scale * p.x, y + scale * p.y, 0, scale * p.sx, scale * p.sy)
  end
  return #layer.plain
end

-- The split way without a depth buffer: the opaque triangles with
-- blending off, then the blended ones "over" (what a layer drawn alone
-- needs; a scene's layers use Scene:draw's passes). Returns the draw calls.
function underdraw.draw_split(layer, x, y, scale)
  local calls = 0
  if layer.opaque then
    love.graphics.setBlendMode("replace", "premultiplied")
    love.graphics.draw(layer.opaque, x, y, 0, scale, scale)
    calls = calls + 1
  end
  if layer.blended then
    love.graphics.setBlendMode("alpha", "alphamultiply")
    love.graphics.draw(layer.blended, x, y, 0, scale, scale)
    calls = calls + 1
  end
  return calls
end

---------------------------------------------------------------------------
-- Placement: a texel (tx, ty) lands on screen at
--   x = position.x + scale * tx - camera_x * parallax,  y = position.y + scale * ty
-- and a layer with fill_width is drawn as copies
-- side by side, one period (scale * width) apart, as many as reach the
-- viewport (the same copies the scorer draws).

-- Top-left corners of the copies of `layer` on screen at `camera_x`.
function underdraw.copy_origins(layer, size, viewport, camera_x)
  local vw, vh = viewport[1], viewport[2]
  local w, h = layer.scale * size[1], layer.scale * size[2]
  local x0 = layer.position[1] - camera_x * layer.parallax
  local y0 = layer.position[2]
  local out = {}
  if y0 + h <= 0 or y0 >= vh or w <= 0 then return out end
  if not layer.fill then
    if x0 + w > 0 and x0 < vw then out[1] = { x0, y0 } end
    return out
  end
  local k = math.floor(-x0 / w)
  while x0 + (k + 1) * w <= 0 do k = k + 1 end
  while x0 + k * w > 0 do k = k - 1 end
  while x0 + k * w < vw do
    if x0 + (k + 1) * w > 0 then out[#out + 1] = { x0 + k * w, y0 } end
    k = k + 1
  end
  return out
end

---------------------------------------------------------------------------
-- The draw list

-- Each layer's constant depth, set in the vertex shader: depth d in [0, 1]
-- (0 nearest) is NDC z = 2d - 1, which the default depth range [0, 1] maps
-- back to d.
underdraw.depth_shader_code = [[
uniform float underdraw_depth;
vec4 position(mat4 transform_projection, vec4 vertex_position) {
    vec4 p = transform_projection * vertex_position;
    p.z = (2.0 * underdraw_depth - 1.0) * p.w;
    return p;
}
]]

local function check_blend(path, d)
  local b = d.blend or {}
  if b.enabled and (b.src ~= "SRC_ALPHA" or b.dst ~= "ONE_MINUS_SRC_ALPHA") then
    bad(path, string.format("layer %s asks for blend %s, %s, which this loader does not draw",
      d.layer, tostring(b.src), tostring(b.dst)), "export the scene with this underdraw")
  end
end

local Scene = {}
Scene.__index = Scene

-- Loads `DIR/draw-list.json` and every layer's mesh and image.
function underdraw.load_scene(dir)
  local path = join(dir, "draw-list.json")
  local list = read_json(path, "give the folder written by `underdraw scene --export`")
  if list.format ~= "underdraw.draw-list" or list.version ~= 2 then
    bad(path, string.format("is format %s version %s, not underdraw.draw-list version 2",
      tostring(list.format), tostring(list.version)), "export the scene again")
  end
  local depth = list.depth or {}
  if depth.test ~= "less" then
    bad(path, "depth test " .. tostring(depth.test) .. " is not \"less\"", "export the scene again")
  end
  local scene = setmetatable({
    path = path,
    viewport = { list.viewport[1], list.viewport[2] },
    depth_clear = depth.clear or 1.0,
    layers = {},  -- back to front
    by_name = {},
    passes = list.passes,
    shader = love.graphics.newShader(underdraw.depth_shader_code),
    textures = { data = {}, images = {}, count = 0 }, -- shared by the layers
  }, Scene)
  for i, l in ipairs(list.layers) do
    if l.repeat_x ~= nil then
      bad(path, "layer " .. tostring(l.name) .. " has the key \"repeat_x\", which draw list version 2 renamed \"fill_width\"",
        "export the scene again")
    end
    local fill = l.fill_width
    local layer = underdraw.load_mesh(join(dir, l.mesh), join(dir, uri_path(l.image)), l, path, scene.textures)
    layer.name = l.name
    layer.position = { l.position[1], l.position[2] }
    layer.scale = l.scale
    layer.parallax = l.parallax
    layer.fill = fill and true or false
    layer.depth = l.depth
    scene.layers[i] = layer
    scene.by_name[l.name] = layer
  end
  for _, p in ipairs(list.passes) do
    for _, d in ipairs(p.draws) do
      local layer = scene.by_name[d.layer]
      if not layer then
        bad(path, "a draw names layer " .. tostring(d.layer) .. ", which is not in \"layers\"",
          "export the scene again")
      end
      if d.triangles ~= "opaque" and d.triangles ~= "blended" then
        bad(path, "triangles " .. tostring(d.triangles) .. " is neither opaque nor blended",
          "export the scene again")
      end
      if not layer[d.triangles] then
        bad(path, string.format("layer %s has no %s triangles to draw", d.layer, d.triangles),
          "export the scene again")
      end
      check_blend(path, d)
    end
  end
  return scene
end

-- Draws `mesh` at every copy of `layer` on screen; returns the copies drawn.
function Scene:draw_copies(layer, mesh, camera_x)
  local origins = underdraw.copy_origins(layer, layer.size, self.viewport, camera_x)
  for _, o in ipairs(origins) do
    love.graphics.draw(mesh, o[1], o[2], 0, layer.scale, layer.scale)
  end
  return #origins
end

-- Draws the plain pieces of `layer` (its rectangle of the texture, or a
-- panel's nine) at every copy on screen; returns the draw calls made.
function Scene:draw_plain(layer, camera_x)
  local origins = underdraw.copy_origins(layer, layer.size, self.viewport, camera_x)
  local calls = 0
  for _, o in ipairs(origins) do
    calls = calls + underdraw.draw_plain(layer, o[1], o[2], layer.scale)
  end
  return calls
end

-- Draws the frame at `camera_x` on the current canvas (which needs a
-- depth buffer, cleared to scene.depth_clear, for the split way).
-- `how` is "split" (default: the draw list's passes) or "plain" (every
-- layer's rectangle, blended, back to front, no depth; a region's
-- rectangle of its sheet, a nine-slice panel's nine pieces). Returns the
-- number of love.graphics.draw calls (split: one per layer copy and draw;
-- plain: one per layer copy and piece).
function Scene:draw(camera_x, how)
  local calls = 0
  love.graphics.push("all")
  love.graphics.origin()
  love.graphics.setColor(1, 1, 1, 1)
  if how == "plain" then
    love.graphics.setDepthMode() -- no depth test, no write
    love.graphics.setBlendMode("alpha", "alphamultiply")
    for _, layer in ipairs(self.layers) do
      calls = calls + self:draw_plain(layer, camera_x)
    end
  else
    love.graphics.setShader(self.shader)
    for _, pass in ipairs(self.passes) do
      for _, d in ipairs(pass.draws) do
        local layer = self.by_name[d.layer]
        if (d.blend or {}).enabled then
          -- "over" on straight alpha: LÖVE multiplies colour by alpha in the
          -- shader, then blends with ONE, ONE_MINUS_SRC_ALPHA (same colour)
          love.graphics.setBlendMode("alpha", "alphamultiply")
        else
          -- blending off: the fragment's colour is stored as it is
          love.graphics.setBlendMode("replace", "premultiplied")
        end
        love.graphics.setDepthMode(d.depth_test and "less" or "always", d.depth_write and true or false)
        self.shader:send("underdraw_depth", d.depth)
        calls = calls + self:draw_copies(layer, layer[d.triangles], camera_x)
      end
    end
  end
  love.graphics.pop()
  return calls
end

-- A canvas of the viewport's size (RGBA8, no MSAA) and the table to pass to
-- love.graphics.setCanvas for it with a depth buffer.
function Scene:new_target()
  local canvas = love.graphics.newCanvas(self.viewport[1], self.viewport[2],
    { format = "normal", msaa = 0 })
  canvas:setFilter("linear", "linear")
  return canvas, { canvas, depth = true }
end

-- Renders the frame at `camera_x` into `canvas` (from new_target), cleared
-- to opaque black and the list's depth clear value; returns Scene:draw's
-- count of draw calls.
function Scene:render(canvas, target, camera_x, how)
  love.graphics.push("all")
  love.graphics.setCanvas(target)
  love.graphics.clear(0, 0, 0, 1, false, self.depth_clear)
  local calls = self:draw(camera_x, how)
  love.graphics.pop()
  return calls
end

-- Writes `canvas` to the PNG file `path` (anywhere on disk).
function underdraw.write_png(canvas, path)
  local png = canvas:newImageData():encode("png"):getString()
  local tmp = path .. ".underdraw-new"
  local f, err = io.open(tmp, "wb")
  if not f then error(string.format("%s: cannot be written (%s); choose a writable path", path, err), 0) end
  f:write(png)
  f:close()
  local ok, rerr = os.rename(tmp, path)
  if not ok then error(string.format("%s: cannot be written (%s)", path, rerr), 0) end
end

return underdraw
