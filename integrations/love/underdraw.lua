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

-- Loads a mesh file (`underdraw.layer` version 2) and the PNG it was cut
-- from (`image_path`). Returns a table:
--   size = {w, h} texels; texture = the Image, filtered and wrapped as the
--   mesh was cut for; vertices = the Mesh holding the one vertex array;
--   opaque, blended = a Mesh each (triangles, a vertex map into that array,
--   nil when the list is empty); rect = the layer's plain rectangle.
function underdraw.load_mesh(path, image_path)
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

  local bytes = read_file(image_path, "the layer's PNG must be where the draw list says")
  local data = love.image.newImageData(love.filesystem.newFileData(bytes, image_path))
  if data:getWidth() ~= w or data:getHeight() ~= h then
    bad(image_path, string.format("is %dx%d, but %s was cut for %dx%d", data:getWidth(),
      data:getHeight(), path, w, h), "cut the layer again")
  end
  -- mip_levels > 0: the meshes are safe down to that level, so mipmaps
  -- may be used; 0 means the texture is sampled at full size only.
  local levels = m.filter and m.filter.mip_levels or 0
  local texture = love.graphics.newImage(data, { mipmaps = levels > 0 })
  local filter = (m.filter and m.filter.mode == "nearest") and "nearest" or "linear"
  texture:setFilter(filter, filter, 1) -- anisotropy 1: the contract assumes none
  if levels > 0 then texture:setMipmapFilter(filter) end
  local wrap = m.wrap or "none"
  local wx = (wrap == "x" or wrap == "xy") and "repeat" or "clamp"
  local wy = (wrap == "y" or wrap == "xy") and "repeat" or "clamp"
  texture:setWrap(wx, wy)

  local verts = {}
  for i = 1, n do
    verts[i] = { pos[2 * i - 1], pos[2 * i], uv[2 * i - 1], uv[2 * i] }
  end
  local layer = { size = { w, h }, texture = texture, path = path }
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
  -- the plain rectangle: the whole image, two triangles
  layer.rect = love.graphics.newMesh(underdraw.vertex_format, {
    { 0, 0, 0, 0 }, { w, 0, 1, 0 }, { w, h, 1, 1 }, { 0, h, 0, 1 },
  }, "triangles", "static")
  layer.rect:setVertexMap(1, 2, 3, 1, 3, 4)
  layer.rect:setTexture(texture)
  return layer
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
  }, Scene)
  for i, l in ipairs(list.layers) do
    if l.repeat_x ~= nil then
      bad(path, "layer " .. tostring(l.name) .. " has the key \"repeat_x\", which draw list version 2 renamed \"fill_width\"",
        "export the scene again")
    end
    local fill = l.fill_width
    local layer = underdraw.load_mesh(join(dir, l.mesh), join(dir, uri_path(l.image)))
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

-- Draws the frame at `camera_x` on the current canvas (which needs a
-- depth buffer, cleared to scene.depth_clear, for the split way).
-- `how` is "split" (default: the draw list's passes) or "plain" (every
-- layer's rectangle, blended, back to front, no depth). Returns the number
-- of love.graphics.draw calls (one per layer copy and draw).
function Scene:draw(camera_x, how)
  local calls = 0
  love.graphics.push("all")
  love.graphics.origin()
  love.graphics.setColor(1, 1, 1, 1)
  if how == "plain" then
    love.graphics.setDepthMode() -- no depth test, no write
    love.graphics.setBlendMode("alpha", "alphamultiply")
    for _, layer in ipairs(self.layers) do
      calls = calls + self:draw_copies(layer, layer.rect, camera_x)
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
